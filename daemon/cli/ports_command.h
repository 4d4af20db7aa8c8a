#pragma once
// `zout ports`: lists the serial ports libserialport finds, with USB vendor/product ids,
// serial numbers and descriptions, so a bench file can name an adapter by serial number.

#include <CLI/CLI.hpp>

namespace zout::cli {

void add_ports_command(CLI::App& app, int& exit_code);

}  // namespace zout::cli
