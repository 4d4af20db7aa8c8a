#pragma once
// A small scripted SCPI instrument for tests: it serves one link at a time on loopback TCP
// or on the master side of a pseudo-terminal pair, reads command lines, and answers each
// as the test's handler says: a reply, silence, garbage, a reply split into single bytes,
// a reply cut off by a disconnect, or an over-long line. It records every line it received.

#include <atomic>
#include <functional>
#include <mutex>
#include <string>
#include <thread>
#include <vector>

namespace zout::test {

struct PeerAction {
  enum class Kind {
    reply,            // send bytes as given (the handler includes the terminator)
    silent,           // send nothing
    reply_bytewise,   // send bytes one at a time, a short pause between them
    send_then_close,  // send bytes (typically half a line), then drop the link
  };
  Kind kind = Kind::silent;
  std::string bytes;

  static PeerAction reply(std::string line_with_terminator) { return {Kind::reply, std::move(line_with_terminator)}; }
  static PeerAction silence() { return {Kind::silent, {}}; }
  static PeerAction bytewise(std::string bytes) { return {Kind::reply_bytewise, std::move(bytes)}; }
  static PeerAction cut_off(std::string bytes) { return {Kind::send_then_close, std::move(bytes)}; }
};

using PeerHandler = std::function<PeerAction(const std::string& line)>;

class ScriptedPeer {
 public:
  enum class Link { tcp, pseudo_terminal };

  // Starts serving at once. For tcp it listens on 127.0.0.1 on a free port; for a
  // pseudo-terminal it opens a pair and serves on the master side.
  ScriptedPeer(Link link, PeerHandler handler);
  ~ScriptedPeer();
  ScriptedPeer(const ScriptedPeer&) = delete;
  ScriptedPeer& operator=(const ScriptedPeer&) = delete;

  // The zout address of this peer: tcp://127.0.0.1:PORT or serial:///dev/pts/N?baud=115200.
  const std::string& address() const { return address_; }
  // The pseudo-terminal slave path (empty for tcp).
  const std::string& device_path() const { return device_path_; }
  // Every command line received so far, terminators removed.
  std::vector<std::string> received() const;
  // How many links (connections) the peer has accepted so far.
  int links_accepted() const { return links_accepted_.load(); }

 private:
  void serve();
  void serve_link(int fd);
  bool act(int fd, const PeerAction& action);  // false when the link was dropped
  bool send_all(int fd, std::string_view bytes);  // false when the link or the peer stopped

  Link link_;
  PeerHandler handler_;
  std::string address_;
  std::string device_path_;
  int listen_fd_ = -1;
  int master_fd_ = -1;
  int slave_keepalive_fd_ = -1;  // keeps the pty from reporting hang-up before the client opens it
  int stop_pipe_[2] = {-1, -1};
  std::atomic<int> links_accepted_{0};
  mutable std::mutex mutex_;
  std::vector<std::string> received_;
  std::thread thread_;
};

// A handler answering *IDN? and a few fixed queries; anything else unanswered.
PeerHandler simple_instrument(std::string terminator = "\n");

}  // namespace zout::test
