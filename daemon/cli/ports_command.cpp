#include "ports_command.h"

#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include <iostream>
#include <memory>

#include "daemon/cli/exit_codes.h"
#include "daemon/cli/text_table.h"
#include "drivers/transport/serial_ports.h"

namespace zout::cli {
namespace {

std::string hex_id(int id) { return id < 0 ? std::string() : fmt::format("{:04x}", id); }

int run_ports(bool as_json) {
  std::vector<SerialPortInfo> ports;
  try {
    ports = list_serial_ports();
  } catch (const std::exception& e) {
    std::cerr << "zout ports: " << e.what() << "\n";
    return exit_failure;
  }
  if (as_json) {
    auto list = nlohmann::json::array();
    for (const auto& port : ports) {
      list.push_back({{"device", port.device_path},
                      {"bus", port.bus},
                      {"description", port.description},
                      {"usb_vendor_id", hex_id(port.usb_vendor_id)},
                      {"usb_product_id", hex_id(port.usb_product_id)},
                      {"usb_serial", port.usb_serial},
                      {"usb_manufacturer", port.usb_manufacturer},
                      {"usb_product", port.usb_product}});
    }
    std::cout << list.dump(2) << "\n";
    return exit_ok;
  }
  if (ports.empty()) {
    std::cout << "no serial ports found\n";
    return exit_ok;
  }
  TextTable table({"DEVICE", "BUS", "USB ID", "SERIAL", "DESCRIPTION", "ADDRESS"});
  for (const auto& port : ports) {
    const std::string usb_id =
        port.usb_vendor_id < 0 ? "" : hex_id(port.usb_vendor_id) + ":" + hex_id(port.usb_product_id);
    const std::string address = port.usb_serial.empty() ? "serial://" + port.device_path
                                                        : "serial://usb-serial/" + port.usb_serial;
    table.add_row({port.device_path, port.bus, usb_id, port.usb_serial, port.description, address});
  }
  std::cout << table.render();
  return exit_ok;
}

}  // namespace

void add_ports_command(CLI::App& app, int& exit_code) {
  auto as_json = std::make_shared<bool>(false);
  auto* verb = app.add_subcommand("ports", "List serial ports with USB ids and serial numbers");
  verb->add_flag("--json", *as_json, "Print a JSON array instead of a table");
  verb->callback([as_json, &exit_code] { exit_code = run_ports(*as_json); });
}

}  // namespace zout::cli
