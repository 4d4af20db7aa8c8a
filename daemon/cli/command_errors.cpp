#include "command_errors.h"

#include <iostream>
#include <stdexcept>

#include "daemon/api/json_rpc.h"
#include "daemon/api/control_client.h"
#include "daemon/cli/exit_codes.h"
#include "daemon/plan/config_error.h"
#include "daemon/store/store_error.h"
#include "drivers/transport/io_error.h"

namespace zout::cli {

int report_current_exception(const std::string& verb) {
  const auto say = [&](const std::string& message) { std::cerr << "zout " << verb << ": " << message << "\n"; };
  try {
    throw;
  } catch (const DaemonUnreachable& e) {
    say(e.what());
    return exit_no_daemon;
  } catch (const ControlCallError& e) {
    say(e.what());
    if (e.code() == rpc::refused) return exit_refused;       // the plan or request will not be run
    if (e.code() == rpc::invalid_params) return exit_usage;  // the request named something wrongly
    return exit_failure;
  } catch (const ConfigError& e) {
    say(e.what());
    return exit_refused;
  } catch (const IoError& e) {
    say(e.what());
    return e.kind() == IoErrorKind::timeout ? exit_timeout : exit_link;
  } catch (const std::invalid_argument& e) {
    say(e.what());
    return exit_usage;
  } catch (const std::exception& e) {
    say(e.what());
    return exit_failure;
  }
}

}  // namespace zout::cli
