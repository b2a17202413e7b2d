#include "baroz/models/height_model.hpp"

namespace baroz {

std::string_view model_name(ModelKind kind) {
  switch (kind) {
    case ModelKind::kIsothermal:
      return "isothermal";
    case ModelKind::kStandard:
      return "standard";
    case ModelKind::kProfile:
      return "profile";
    case ModelKind::kAuto:
      return "auto";
  }
  return "unknown";
}

std::optional<ModelKind> parse_model_name(std::string_view name) {
  for (ModelKind kind :
       {ModelKind::kIsothermal, ModelKind::kStandard, ModelKind::kProfile, ModelKind::kAuto}) {
    if (name == model_name(kind)) return kind;
  }
  return std::nullopt;
}

}  // namespace baroz
