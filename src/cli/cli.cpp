// The command line: option parsing and dispatch to the subcommands.
#include "baroz/cli/cli.hpp"

#include <cctype>
#include <iostream>

#include <fmt/format.h>

#include "baroz/core/error.hpp"
#include "cli_common.hpp"

namespace baroz::cli {

namespace {

std::string lower_first(std::string s) {
  if (!s.empty()) s[0] = static_cast<char>(std::tolower(static_cast<unsigned char>(s[0])));
  while (!s.empty() && (s.back() == '.' || s.back() == '\n')) s.pop_back();
  return s;
}

int run_impl(std::span<const std::string_view> args, const Streams& streams) {
  CLI::App app{
      "baroz turns barometric logs (time, pressure, optionally temperature, humidity, GNSS)\n"
      "into height series above the launch point and above sea level, with an error band."};
  app.name("baroz");
  app.footer(std::string("\n") + std::string(kCaution));
  app.set_version_flag("--version", std::string("baroz ") + BAROZ_VERSION,
                       "Print the version and exit");
  app.require_subcommand(1);
  app.fallthrough(false);

  std::vector<std::string> arguments(args.begin(), args.end());
  int status = 0;
  add_height_command(app, streams, status, arguments);
  add_atmosphere_command(app, streams, status);
  add_inspect_command(app, streams, status);
  add_summary_command(app, streams, status);
  add_plot_command(app, streams, status);

  std::vector<std::string> reversed(args.rbegin(), args.rend());
  try {
    app.parse(reversed);
  } catch (const CLI::CallForHelp&) {
    streams.out << app.help();
    return 0;
  } catch (const CLI::CallForAllHelp&) {
    streams.out << app.help("", CLI::AppFormatMode::All);
    return 0;
  } catch (const CLI::CallForVersion& e) {
    streams.out << e.what() << '\n';
    return 0;
  } catch (const CLI::ParseError& e) {
    if (e.get_exit_code() == 0) return 0;
    streams.err << "baroz: " << lower_first(e.what()) << '\n'
                << "baroz: try 'baroz --help' or 'baroz COMMAND --help'\n";
    return static_cast<int>(ExitCode::kUsage);
  } catch (const Error& e) {
    streams.err << "baroz: " << e.what() << '\n';
    return static_cast<int>(e.code());
  }
  return status;
}

}  // namespace

int run(std::span<const std::string_view> args, std::ostream& out, std::ostream& err) {
  Streams streams{nullptr, out, err};
  return run_impl(args, streams);
}

int run(std::span<const std::string_view> args, std::istream& in, std::ostream& out,
        std::ostream& err) {
  Streams streams{&in, out, err};
  return run_impl(args, streams);
}

}  // namespace baroz::cli
