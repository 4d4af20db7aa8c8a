#pragma once
// The bench file (DEVELOPERS.md, "Files a user writes"): the instruments of one station, where the database and the
// control socket live, and the hard safety maxima. Relative paths in the file (database,
// socket, dialects) are taken relative to the directory of the bench file itself.

#include <chrono>
#include <optional>
#include <string>

namespace zout {

struct InstrumentConfig {
  std::string address;       // URI, checked with parse_address
  std::string dialect_path;  // resolved path of the dialect file
  std::chrono::milliseconds timeout{2000};
};

struct SafetyLimits {
  double max_output_volts = 0.0;       // a reading above this trips safe state
  double max_load_amps = 0.0;          // no load step may ask for more
  double max_source_volts_peak = 0.0;  // no drive may exceed this (amplitude + |offset|)
};

struct BenchConfig {
  std::string file_path;
  std::string station;
  std::string database_path;
  std::string control_socket_path;
  InstrumentConfig source;
  InstrumentConfig meter;
  InstrumentConfig load;
  std::optional<InstrumentConfig> panel_switch;  // role "switch"; absent when no panel
  SafetyLimits safety;
};

// Loads and checks a bench file; throws ConfigError naming the file, JSON path and rule.
// Addresses are parsed and dialect files loaded (and checked for their role) here, so a
// bench that loads is a bench zout can talk to.
BenchConfig load_bench_file(const std::string& file_path);

}  // namespace zout
