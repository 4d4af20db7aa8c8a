#include "scpi_error.h"

namespace zout::sim {

const char* scpi_error_description(int code) {
  // SCPI-1999 Vol 2 §21.8; descriptions from memory.
  switch (code) {
    case 0: return "No error";
    case scpi_code::command_error: return "Command error";
    case scpi_code::invalid_character: return "Invalid character";
    case scpi_code::syntax_error: return "Syntax error";
    case scpi_code::data_type_error: return "Data type error";
    case scpi_code::parameter_not_allowed: return "Parameter not allowed";
    case scpi_code::missing_parameter: return "Missing parameter";
    case scpi_code::undefined_header: return "Undefined header";
    case scpi_code::invalid_suffix: return "Invalid suffix";
    case scpi_code::suffix_not_allowed: return "Suffix not allowed";
    case scpi_code::invalid_character_data: return "Invalid character data";
    case scpi_code::expression_error: return "Expression error";
    case -200: return "Execution error";
    case scpi_code::settings_conflict: return "Settings conflict";
    case scpi_code::data_out_of_range: return "Data out of range";
    case scpi_code::illegal_parameter_value: return "Illegal parameter value";
    case -300: return "Device-specific error";
    case scpi_code::queue_overflow: return "Queue overflow";
    case scpi_code::input_buffer_overrun: return "Input buffer overrun";
    case -400: return "Query error";
    case -410: return "Query INTERRUPTED";
    default: return "Error";
  }
}

}  // namespace zout::sim
