#pragma once
// One client link to one simulated instrument (a TCP connection or a pseudo-terminal): frames
// program messages (lines ending in LF or CR; empty lines ignored), runs their units through
// the instrument one after another with the instrument's timing, and sends the replies of a
// message's queries as one response message ending in LF (IEEE 488.2 §8.4). Everything runs
// on the io_context's thread; waits are timers, so other instruments keep working.
//
// Timing of one unit: command_time_s of parsing, then the unit acts (at that moment of
// simulated time), then its busy time, then its acquisition's samples, if any. A message
// arriving while another runs waits its turn (input is buffered, at most 64 KiB per line and
// 256 lines; beyond that the input is dropped and -363 Input buffer overrun queued).
//
// Faults (InstrumentFaults) act here: drop (when the next message arrives), stall, garbage
// and split (on each reply).

#include <array>
#include <deque>
#include <functional>
#include <memory>
#include <string>
#include <vector>

#include <asio.hpp>

#include "header_tree.h"
#include "link_stream.h"
#include "scpi_instrument.h"
#include "seeded_random.h"
#include "sim_clock.h"

namespace zout::sim {

class InstrumentLink : public std::enable_shared_from_this<InstrumentLink> {
 public:
  static constexpr std::size_t max_line_bytes = 64 * 1024;
  static constexpr std::size_t max_queued_lines = 256;
  static constexpr double split_byte_gap_s = 0.001;

  // `on_closing` runs once, when the link closes for any reason (peer gone, drop fault,
  // close()), just before the stream is closed, so an owner can put a replacement in place
  // before the peer notices. It may release the owner's reference to this link. The
  // instrument and clock must outlive the link.
  InstrumentLink(asio::io_context& io, std::unique_ptr<LinkStream> stream, ScpiInstrument& instrument,
                 const SimClock& clock, std::function<void()> on_closing);

  // Starts reading. Call once, on a link held by a shared_ptr.
  void start();
  // Closes the stream and stops all work; idempotent.
  void close();
  bool is_open() const { return !closed_; }

 private:
  struct Chunk {
    std::string bytes;
    double delay_before_s = 0.0;
  };

  void read_more();
  void take_bytes(const char* data, std::size_t size);
  void next_message();
  void run_unit();
  void after_unit(const CommandOutcome& outcome);
  void take_sample();
  void next_unit();
  void end_message();
  void send_reply(const std::string& reply);
  void write_next();
  // Runs `then` after `seconds` on the processing timer (at once when seconds <= 0).
  void wait(double seconds, std::function<void()> then);

  asio::io_context& io_;
  std::unique_ptr<LinkStream> stream_;
  ScpiInstrument& instrument_;
  const SimClock& clock_;
  std::function<void()> on_closing_;
  asio::steady_timer timer_;
  asio::steady_timer write_timer_;
  SeededRandom garbage_;
  bool closed_ = false;
  bool started_ = false;

  // Input.
  std::array<char, 4096> chunk_{};
  std::string partial_;
  bool discarding_ = false;  // dropping an over-long line up to its terminator
  std::deque<std::string> lines_;

  // The message being run.
  bool busy_ = false;
  std::vector<std::string> units_;
  std::size_t unit_index_ = 0;
  HeaderTree::Level level_;
  std::vector<std::string> replies_;
  std::shared_ptr<Acquisition> acquisition_;
  std::size_t sample_index_ = 0;
  double acquisition_start_s_ = 0.0;

  // Output.
  std::deque<Chunk> out_;
  bool writing_ = false;
};

}  // namespace zout::sim
