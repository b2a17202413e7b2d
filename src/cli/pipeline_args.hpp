// Private to the command line: the options every command that runs the
// height pipeline shares (reader, model, reference, uncertainty,
// validation), and their resolution into HeightOptions.
#pragma once

#include <string>
#include <vector>

#include <CLI/CLI.hpp>

#include "baroz/pipeline/height_job.hpp"
#include "cli_common.hpp"

namespace baroz::cli {

struct PipelineArgs {
  ReaderArgs reader;
  std::string model = "auto";
  std::string temperature_model = "reference";
  std::string profile_file, profile_leg = "ascent", profile_layer, saturation = "water";
  std::string latitude;
  std::string ref_pressure, qnh, elevation, ref_window, ref_temperature;
  std::string ref_base, base_offset, base_elevation, outside_base;
  bool no_tie = false;
  std::string drift, landing_height;
  std::vector<std::string> checkpoints;
  bool ref_gnss = false;
  std::string gnss_below;
  std::string sigma_p, sigma_p_abs, sigma_ref, sigma_t, sigma_t_random, sigma_t_model, drift_sigma,
      confidence;
  std::string monte_carlo, seed;
  std::string p_range;
  std::string spike_window, vspeed_window;
  bool strict = false;
};

/// Adds the reader, model, reference, uncertainty and validation options.
void add_pipeline_options(CLI::App& app, PipelineArgs& args);

/// Resolves them (throws baroz::Error usage on bad values). The series
/// options are left at their defaults.
HeightOptions resolve_pipeline_options(const PipelineArgs& args);

}  // namespace baroz::cli
