// `baroz height --rerun MANIFEST [overrides...]` (docs/cli.md, "Re-running a
// recorded run"): the recorded command line, with the overrides' options in
// place of the recorded ones, run again through the whole command line after
// every input it reads again has been checked against its recorded SHA-256.
#include "rerun.hpp"

#include <algorithm>
#include <cctype>
#include <filesystem>
#include <optional>
#include <set>
#include <sstream>
#include <string_view>

#include <fmt/format.h>
#include <simdjson.h>

#include "baroz/cli/cli.hpp"
#include "baroz/core/error.hpp"
#include "baroz/output/sha256.hpp"
#include "baroz/pipeline/diagnostics.hpp"

namespace baroz::cli {
namespace {

namespace fs = std::filesystem;
namespace dom = simdjson::dom;

/// One option occurrence or one operand of a `height` command line.
struct Item {
  std::string key;       ///< canonical name ("--output"); empty for an operand
  std::string spelling;  ///< the name as written ("-o", "--output")
  std::optional<std::string> value;
  bool joined = false;  ///< written "--name=VALUE" or "-nVALUE"
  bool operand() const { return key.empty(); }
};

/// The reference choices: an override giving one drops every recorded one.
const std::set<std::string> kReferenceChoices{"--ref-pressure", "--qnh", "--ref-base",
                                              "--ref-window"};
/// Options of a base-station reference, dropped when the override chooses
/// another reference.
const std::set<std::string> kBaseOptions{"--base-offset", "--base-elevation", "--no-tie",
                                         "--outside-base"};
/// Options of a corrected reference window, dropped when the override
/// chooses a reference that is not the window (--drift linear refuses them).
const std::set<std::string> kWindowOptions{"--drift", "--landing-height"};
/// Where a run writes: never taken over from the recorded run.
const std::set<std::string> kOutputs{"--output", "--manifest", "--rejects", "--summary", "--plot"};

std::string canonical_name(const CLI::Option& o) {
  if (!o.get_lnames().empty()) return "--" + o.get_lnames().front();
  if (!o.get_snames().empty()) return "-" + o.get_snames().front();
  return o.get_name();
}

/// Splits `tokens` (a `height` command line without "height") into option
/// occurrences and operands as CLI11 reads them: `--name=VALUE`, `--name
/// VALUE`, `-nVALUE`, `-n VALUE`, clusters of short flags (`-qx`), and `--`
/// before operands. Every value option of `height` takes one value per
/// occurrence (the repeatable ones are allow_extra_args(false)).
std::vector<Item> split_items(const CLI::App& app, const std::vector<std::string>& tokens,
                              const std::string& where) {
  std::vector<Item> items;
  bool operands_only = false;
  for (std::size_t i = 0; i < tokens.size(); ++i) {
    std::string token = tokens[i];
    if (operands_only || token.size() < 2 || token[0] != '-') {
      items.push_back({"", "", token, false});
      continue;
    }
    if (token == "--") {
      operands_only = true;
      continue;
    }
    for (;;) {  // more than once for a cluster of short flags
      const bool long_name = token[1] == '-';
      std::string name, rest;
      std::optional<std::string> inline_value;
      if (long_name) {
        const auto eq = token.find('=');
        name = token.substr(0, eq);
        if (eq != std::string::npos) inline_value = token.substr(eq + 1);
      } else {
        name = token.substr(0, 2);
        rest = token.substr(2);
      }
      Item item{name, name, std::nullopt, false};
      bool takes_value = false;
      if (const CLI::Option* opt = app.get_option_no_throw(name)) {
        item.key = canonical_name(*opt);
        takes_value = opt->get_items_expected_max() > 0;
      }
      if (long_name) {
        if (inline_value) {
          item.value = inline_value;
          item.joined = true;
        } else if (takes_value) {
          if (i + 1 >= tokens.size())
            throw usage_error(fmt::format("{}: {} has no value", where, name));
          item.value = tokens[++i];
        }
        items.push_back(item);
        break;
      }
      if (takes_value) {
        if (!rest.empty()) {
          item.value = rest;
          item.joined = true;
        } else {
          if (i + 1 >= tokens.size())
            throw usage_error(fmt::format("{}: {} has no value", where, name));
          item.value = tokens[++i];
        }
        items.push_back(item);
        break;
      }
      items.push_back(item);
      if (rest.empty()) break;
      token = "-" + rest;
    }
  }
  return items;
}

void render(const Item& item, std::vector<std::string>& out) {
  if (item.operand()) {
    out.push_back(*item.value);
  } else if (!item.value) {
    out.push_back(item.spelling);
  } else if (item.joined && !item.value->empty()) {  // CLI11 reads "--name=" as "--name"
    const bool long_name = item.spelling.size() > 2 && item.spelling[1] == '-';
    out.push_back(item.spelling + (long_name ? "=" : "") + *item.value);
  } else {
    out.push_back(item.spelling);
    out.push_back(*item.value);
  }
}

std::string rendered(const Item& item) {
  std::vector<std::string> words;
  render(item, words);
  return shell_quote(words);
}

/// A file the recorded run read, with its checksum.
struct RecordedFile {
  std::string path;
  std::string sha256;
};

struct ManifestRecord {
  std::vector<std::string> arguments;  ///< after "height"
  std::vector<RecordedFile> inputs, profiles, bases;
};

std::optional<dom::element> member(dom::element e, std::string_view key) {
  dom::object object;
  dom::element value;
  if (e.get_object().get(object) || object[key].get(value) || value.is_null()) return std::nullopt;
  return value;
}

std::optional<std::string> member_string(dom::element e, std::string_view key) {
  std::string_view text;
  auto value = member(e, key);
  if (!value || value->get_string().get(text)) return std::nullopt;
  return std::string(text);
}

/// The {path-key, sha256} file record under `e`, if it has both.
std::optional<RecordedFile> file_record(std::optional<dom::element> e, std::string_view path_key) {
  if (!e) return std::nullopt;
  auto path = member_string(*e, path_key);
  auto sha = member_string(*e, "sha256");
  if (!path || !sha || sha->empty()) return std::nullopt;
  return RecordedFile{*path, *sha};
}

ManifestRecord read_manifest(const std::string& path) {
  std::string text;
  try {
    std::unique_ptr<ByteSource> source = open_file_source(path);
    char buffer[65536];
    for (std::size_t n; (n = source->read(buffer, sizeof buffer)) > 0;) text.append(buffer, n);
  } catch (const Error& e) {
    throw Error(e.code(), fmt::format("--rerun: {}", e.what()));
  }
  const std::string not_manifest = fmt::format("{}: not a baroz height manifest", path);
  dom::parser parser;
  dom::element doc;
  const simdjson::padded_string padded(text);
  if (auto error = parser.parse(padded).get(doc))
    throw usage_error(
        fmt::format("{} (not JSON: {})", not_manifest, simdjson::error_message(error)));
  const auto tool = member_string(doc, "tool");
  const auto command = member_string(doc, "command");
  if (tool != "baroz" || command != "height")
    throw usage_error(
        fmt::format("{} (tool \"{}\", command \"{}\"; a manifest is written by "
                    "baroz height --manifest FILE)",
                    not_manifest, tool.value_or(""), command.value_or("")));

  ManifestRecord m;
  dom::array arguments;
  auto args_element = member(doc, "arguments");
  if (!args_element || args_element->get_array().get(arguments))
    throw usage_error(not_manifest + " (no \"arguments\" array)");
  for (dom::element a : arguments) {
    std::string_view s;
    if (a.get_string().get(s)) throw usage_error(not_manifest + " (an argument is not a string)");
    m.arguments.emplace_back(s);
  }
  if (m.arguments.empty() || m.arguments.front() != "height")
    throw usage_error(not_manifest + " (its arguments do not start with \"height\")");
  m.arguments.erase(m.arguments.begin());

  dom::array inputs;
  auto inputs_element = member(doc, "inputs");
  if (!inputs_element || inputs_element->get_array().get(inputs))
    throw usage_error(not_manifest + " (no \"inputs\" array)");
  for (dom::element in : inputs) {
    auto log = file_record(in, "path");
    if (!log) throw usage_error(not_manifest + " (an input has no path or sha256)");
    m.inputs.push_back(*log);
    std::optional<dom::element> profile;
    if (auto model = member(in, "model")) profile = member(*model, "profile");
    if (auto p = file_record(profile, "source")) m.profiles.push_back(*p);
    std::optional<dom::element> base;
    if (auto reference = member(in, "reference")) base = member(*reference, "base");
    if (auto b = file_record(base, "path")) m.bases.push_back(*b);
  }
  return m;
}

std::string file_sha256(const std::string& path) {
  std::unique_ptr<ByteSource> source = open_file_source(path);
  source->enable_hashing();
  char buffer[65536];
  while (source->read(buffer, sizeof buffer) > 0) {
  }
  return source->sha256_hex();
}

std::string short_hash(const std::string& hex) {
  return hex.substr(0, 12) + "...";
}

/// Checks recorded files against their checksums; collects the problems.
class Verifier {
 public:
  Verifier(const std::string& manifest, std::vector<std::string>& problems)
      : manifest_(manifest), dir_(fs::path(manifest).parent_path()), problems_(problems) {}

  /// Finds `path` (as given, else beside the manifest), checks it against
  /// `sha256` and sets `path` to where it was found.
  void check(std::string& path, const std::string& sha256) {
    std::error_code ec;
    std::string found = path;
    if (!fs::exists(fs::path(path), ec)) {
      const fs::path beside = dir_ / path;
      if (fs::path(path).is_relative() && !dir_.empty() && fs::exists(beside, ec)) {
        found = beside.string();
      } else {
        problems_.push_back(fmt::format(
            "{}: missing since the recorded run (not found{}); refusing to re-run", path,
            fs::path(path).is_relative() && !dir_.empty()
                ? fmt::format(" here nor in '{}', beside the manifest", dir_.string())
                : std::string()));
        return;
      }
    }
    std::string now;
    try {
      now = file_sha256(found);
    } catch (const Error& e) {
      problems_.push_back(fmt::format("{}; refusing to re-run", e.what()));
      return;
    }
    if (now != sha256) {
      problems_.push_back(fmt::format(
          "{}: changed since the recorded run (sha256 {} recorded, {} now); refusing to re-run",
          found, short_hash(sha256), short_hash(now)));
      return;
    }
    path = found;
  }

  /// Checks the value of a kept `option` occurrence against the file
  /// `records` of the manifest.
  void check_option_file(Item& item, const std::vector<RecordedFile>& records) {
    if (!item.value || item.value->empty()) return;
    for (const auto& r : records)
      if (r.path == *item.value) return check(*item.value, r.sha256);
    problems_.push_back(fmt::format(
        "{} {}: no sha256 recorded in {} (the recorded run did not read it); refusing to re-run",
        item.spelling, *item.value, manifest_));
  }

 private:
  const std::string& manifest_;
  fs::path dir_;
  std::vector<std::string>& problems_;
};

std::string read_standard_input(const Streams& streams) {
  std::unique_ptr<ByteSource> source = open_input("-", streams);
  std::string data;
  char buffer[65536];
  for (std::size_t n; (n = source->read(buffer, sizeof buffer)) > 0;) data.append(buffer, n);
  return data;
}

bool flag_set(const Item& item) {
  if (!item.value) return true;
  std::string v = *item.value;
  for (char& c : v) c = static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
  return !(v == "false" || v == "0" || v == "off" || v == "no");
}

}  // namespace

std::string shell_quote(const std::vector<std::string>& words) {
  constexpr std::string_view kPlain = "_@%+=:,./-";
  std::string out;
  for (const auto& w : words) {
    if (!out.empty()) out += ' ';
    const bool plain = !w.empty() && std::all_of(w.begin(), w.end(), [&](char c) {
      return std::isalnum(static_cast<unsigned char>(c)) || kPlain.find(c) != std::string::npos;
    });
    if (plain) {
      out += w;
      continue;
    }
    out += '\'';
    for (char c : w) {
      if (c == '\'')
        out += "'\\''";
      else
        out += c;
    }
    out += '\'';
  }
  return out;
}

int rerun_height(const CLI::App& height, const std::string& manifest,
                 const std::vector<std::string>& arguments, const Streams& streams) {
  ManifestRecord m = read_manifest(manifest);

  // The overrides: the command line after "height", without --rerun.
  const auto at = std::find(arguments.begin(), arguments.end(), "height");
  const std::vector<std::string> override_tokens(at == arguments.end() ? at : at + 1,
                                                 arguments.end());
  std::vector<Item> overrides;
  for (auto& item : split_items(height, override_tokens, "the command line"))
    if (item.key != "--rerun") overrides.push_back(std::move(item));
  std::vector<Item> recorded = split_items(height, m.arguments, manifest);

  std::set<std::string> given;
  bool new_operands = false;
  for (const auto& item : overrides) {
    if (item.operand())
      new_operands = true;
    else
      given.insert(item.key);
  }
  const bool new_reference = std::any_of(given.begin(), given.end(), [](const std::string& k) {
    return kReferenceChoices.count(k) > 0;
  });
  const bool new_base = given.count("--ref-base") > 0;
  const bool new_non_window = new_base || given.count("--ref-pressure") || given.count("--qnh");

  std::vector<Item> kept;
  std::vector<std::string> outputs_left;
  for (auto& item : recorded) {
    if (item.key == "--rerun")
      throw usage_error(fmt::format("{}: the recorded arguments hold --rerun", manifest));
    if (item.operand()) {
      if (!new_operands) kept.push_back(item);
    } else if (kOutputs.count(item.key)) {
      if (!given.count(item.key)) outputs_left.push_back(rendered(item));
    } else if (given.count(item.key) || (new_reference && kReferenceChoices.count(item.key)) ||
               (new_reference && !new_base && kBaseOptions.count(item.key)) ||
               (new_non_window && kWindowOptions.count(item.key))) {
      // replaced by the overrides
    } else {
      kept.push_back(item);
    }
  }

  auto operands_of = [](const std::vector<Item>& items) {
    std::vector<Item> out;
    for (const auto& item : items)
      if (item.operand()) out.push_back(item);
    return out;
  };
  const std::size_t input_count = operands_of(new_operands ? overrides : kept).size();
  if (input_count > 1 && !given.count("--output"))
    throw usage_error(fmt::format(
        "{} records a batch run of {} inputs: give -o DIR for the re-run's outputs (the "
        "recorded ones are not written again)",
        manifest, input_count));

  // Every input read again must be the recorded one.
  std::vector<std::string> problems;
  Verifier verifier(manifest, problems);
  std::optional<std::string> stdin_data;
  if (new_operands) {
    for (const auto& item : overrides) {
      if (!item.operand()) continue;
      const std::string& path = *item.value;
      std::string now;
      try {
        if (path == "-") {
          stdin_data = read_standard_input(streams);
          now = sha256_hex(*stdin_data);
        } else {
          now = file_sha256(path);
        }
      } catch (const Error& e) {
        problems.push_back(fmt::format("{}; refusing to re-run", e.what()));
        continue;
      }
      const bool recorded_input = std::any_of(
          m.inputs.begin(), m.inputs.end(), [&](const RecordedFile& r) { return r.sha256 == now; });
      const std::string name = path == "-" ? "<stdin>" : path;
      if (recorded_input) continue;
      if (m.inputs.size() == 1)
        problems.push_back(fmt::format(
            "{}: changed since the recorded run (sha256 {} recorded, {} now); refusing to "
            "re-run",
            name, short_hash(m.inputs.front().sha256), short_hash(now)));
      else
        problems.push_back(fmt::format(
            "{}: not an input of the recorded run (sha256 {} now matches none of the {} "
            "recorded in {}); refusing to re-run",
            name, short_hash(now), m.inputs.size(), manifest));
    }
  } else {
    const std::string stdin_problem = fmt::format(
        "the run recorded in {} read standard input: give the same data again as an input "
        "(a file, or '-'), it is checked against the recorded sha256; refusing to re-run",
        manifest);
    if (input_count == 0) problems.push_back(stdin_problem);
    for (auto& item : kept) {
      if (!item.operand()) continue;
      if (*item.value == "-") {
        problems.push_back(stdin_problem);
        continue;
      }
      auto r = std::find_if(m.inputs.begin(), m.inputs.end(),
                            [&](const RecordedFile& f) { return f.path == *item.value; });
      if (r == m.inputs.end())
        problems.push_back(fmt::format(
            "{}: no sha256 recorded in {} (the recorded run did not read it); refusing to "
            "re-run",
            *item.value, manifest));
      else
        verifier.check(*item.value, r->sha256);
    }
  }
  for (auto& item : kept) {
    if (item.key == "--profile") verifier.check_option_file(item, m.profiles);
    if (item.key == "--ref-base") verifier.check_option_file(item, m.bases);
  }
  if (!problems.empty()) {
    for (std::size_t i = 0; i + 1 < problems.size(); ++i)
      streams.err << "baroz: " << problems[i] << '\n';
    throw input_error(problems.back());
  }

  // The expanded command line: recorded options kept, the overrides, then
  // the inputs (where they were found).
  const std::vector<Item> operands = operands_of(new_operands ? overrides : kept);
  std::vector<std::string> args{"height"};
  bool quiet = false;
  std::string error_format = "text";
  for (const auto* list : {&kept, &overrides})
    for (const auto& item : *list) {
      if (item.operand()) continue;
      if (item.key == "--quiet") quiet = flag_set(item);
      if (item.key == "--error-format" && item.value) error_format = *item.value;
      render(item, args);
    }
  if (std::any_of(operands.begin(), operands.end(),
                  [](const Item& i) { return i.value->size() > 1 && i.value->front() == '-'; }))
    args.push_back("--");
  for (const auto& item : operands) render(item, args);

  Diagnostics diag(streams.err, error_format == "json" ? ErrorFormat::kJson : ErrorFormat::kText,
                   quiet);
  diag.note({}, fmt::format("re-running {}: baroz {}", manifest, shell_quote(args)));
  if (!outputs_left.empty()) {
    std::string note = "the recorded run's outputs are not written again (";
    for (std::size_t i = 0; i < outputs_left.size(); ++i) note += (i ? ", " : "") + outputs_left[i];
    note += ")";
    if (!given.count("--output"))
      note += "; the series goes to standard output (give -o FILE to write a file)";
    diag.note({}, note);
  }

  std::vector<std::string_view> views(args.begin(), args.end());
  if (stdin_data) {
    std::istringstream in(*stdin_data);
    return run(views, in, streams.out, streams.err);
  }
  if (streams.in) return run(views, *streams.in, streams.out, streams.err);
  return run(views, streams.out, streams.err);
}

}  // namespace baroz::cli
