#include "baroz/validation/row_problem.hpp"

namespace baroz {

std::string_view reject_code(RejectReason reason) {
  switch (reason) {
    case RejectReason::kNotANumber: return "not_a_number";
    case RejectReason::kMissingField: return "missing_field";
    case RejectReason::kNonFinite: return "non_finite";
    case RejectReason::kPressureNotPositive: return "pressure_not_positive";
    case RejectReason::kPressureOutOfRange: return "pressure_out_of_range";
    case RejectReason::kTemperatureOutOfRange: return "temperature_out_of_range";
    case RejectReason::kHumidityOutOfRange: return "humidity_out_of_range";
    case RejectReason::kPositionOutOfRange: return "position_out_of_range";
    case RejectReason::kBadTime: return "bad_time";
    case RejectReason::kExtraFields: return "extra_fields";
    case RejectReason::kBadQuote: return "bad_quote";
    case RejectReason::kUnterminatedQuote: return "unterminated_quote";
    case RejectReason::kTooLong: return "record_too_long";
    case RejectReason::kBadJson: return "bad_json";
    case RejectReason::kBadEncoding: return "bad_encoding";
    case RejectReason::kNoTemperature: return "no_temperature";
    case RejectReason::kOutsideModel: return "outside_model";
    case RejectReason::kOutsideBase: return "outside_base";
    case RejectReason::kCount: break;
  }
  return "unknown";
}

}  // namespace baroz
