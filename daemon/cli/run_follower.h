#pragma once
// Follows runs of zoutd to their ends over the control socket, for `zout watch` and
// `zout start --watch`: each point as it lands, each sweep's figures, each run's verdict, and
// (on a terminal) a progress bar redrawn in place — sweep and step, elapsed and estimated
// remaining time. With json_lines, every notification about the runs is printed as one JSON
// object per line instead.

#include <cstdint>
#include <iosfwd>
#include <map>
#include <string>
#include <vector>

#include "daemon/api/control_client.h"
#include "daemon/text/time_text.h"

namespace zout::cli {

class RunFollower {
 public:
  // `client` must outlive the follower; the follower subscribes it to notifications. Times
  // in the text lines are shown in `zone` (JSON lines carry the daemon's UTC text).
  RunFollower(ControlClient& client, std::ostream& out, bool json_lines, bool terminal,
              text::TimeZoneChoice zone);

  // Follows `run_ids` until every one has ended (queued ones are waited for); returns each
  // run's final state ("passed", "failed", "aborted", "interrupted", "error").
  std::map<std::int64_t, std::string> follow(const std::vector<std::int64_t>& run_ids);

 private:
  struct Followed {
    std::string serial;
    std::string state;
    int step_count = 0;
    int sweep_count = 1;
    int points_done = 0;
    double started_s = -1.0;  // steady-clock seconds when it was seen running
  };
  void on_notification(const nlohmann::json& message);
  void print_point(std::int64_t run_id, const nlohmann::json& point);
  void print_sweep(std::int64_t run_id, const nlohmann::json& result);
  void print_end(std::int64_t run_id, const nlohmann::json& params);
  std::string at_text(const nlohmann::json& object, const char* key) const;
  // "[#####.....]  45%  elapsed 0:12  remaining ~0:15" for one run.
  static std::string bar_text(const Followed& f, int width);
  void draw_bar();
  void clear_bar();

  ControlClient& client_;
  std::ostream& out_;
  bool json_lines_;
  bool terminal_;
  text::TimeZoneChoice zone_;
  bool bar_shown_ = false;
  std::int64_t current_ = 0;
  std::map<std::int64_t, Followed> runs_;
};

// The exit status followed runs earn: exit_run_incomplete if any was aborted, interrupted or
// ended in error; else exit_unit_failed if any failed; else exit_ok.
int exit_status_for(const std::map<std::int64_t, std::string>& states);

}  // namespace zout::cli
