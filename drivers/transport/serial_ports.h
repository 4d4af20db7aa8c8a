#pragma once
// Serial port discovery through libserialport: what `zout ports` lists, and how an address
// like serial://usb-serial/A5C0FFEE finds its adapter after re-plugging or a reboot.

#include <optional>
#include <string>
#include <vector>

namespace zout {

struct SerialPortInfo {
  std::string device_path;   // "/dev/ttyUSB0"
  std::string description;   // libserialport's human description
  std::string bus;           // "native", "usb" or "bluetooth"
  int usb_vendor_id = -1;    // USB ids, -1 when not a USB port
  int usb_product_id = -1;
  std::string usb_serial;    // USB serial number, empty when not known
  std::string usb_manufacturer;
  std::string usb_product;
};

// Every serial port the system reports, sorted by device path. Throws std::runtime_error
// when the OS enumeration itself fails.
std::vector<SerialPortInfo> list_serial_ports();

// The device path of the USB adapter whose serial number is `usb_serial`, if connected.
std::optional<std::string> find_usb_serial_port(const std::string& usb_serial);

}  // namespace zout
