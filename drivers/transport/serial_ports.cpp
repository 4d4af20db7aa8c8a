#include "serial_ports.h"

#include <libserialport.h>

#include <algorithm>
#include <stdexcept>

namespace zout {
namespace {

std::string text_or_empty(const char* text) { return text ? std::string(text) : std::string(); }

}  // namespace

std::vector<SerialPortInfo> list_serial_ports() {
  sp_port** ports = nullptr;
  if (sp_list_ports(&ports) != SP_OK) {
    char* message = sp_last_error_message();
    std::string text = text_or_empty(message);
    sp_free_error_message(message);
    throw std::runtime_error("cannot list serial ports: " + text);
  }
  std::vector<SerialPortInfo> result;
  for (sp_port** port = ports; *port != nullptr; ++port) {
    SerialPortInfo info;
    info.device_path = text_or_empty(sp_get_port_name(*port));
    info.description = text_or_empty(sp_get_port_description(*port));
    switch (sp_get_port_transport(*port)) {
      case SP_TRANSPORT_USB: {
        info.bus = "usb";
        int vid = -1;
        int pid = -1;
        if (sp_get_port_usb_vid_pid(*port, &vid, &pid) == SP_OK) {
          info.usb_vendor_id = vid;
          info.usb_product_id = pid;
        }
        info.usb_serial = text_or_empty(sp_get_port_usb_serial(*port));
        info.usb_manufacturer = text_or_empty(sp_get_port_usb_manufacturer(*port));
        info.usb_product = text_or_empty(sp_get_port_usb_product(*port));
        break;
      }
      case SP_TRANSPORT_BLUETOOTH: info.bus = "bluetooth"; break;
      default: info.bus = "native"; break;
    }
    result.push_back(std::move(info));
  }
  sp_free_port_list(ports);
  std::sort(result.begin(), result.end(),
            [](const SerialPortInfo& a, const SerialPortInfo& b) { return a.device_path < b.device_path; });
  return result;
}

std::optional<std::string> find_usb_serial_port(const std::string& usb_serial) {
  for (const auto& port : list_serial_ports()) {
    if (port.bus == "usb" && port.usb_serial == usb_serial) return port.device_path;
  }
  return std::nullopt;
}

}  // namespace zout
