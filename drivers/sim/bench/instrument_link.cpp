#include "instrument_link.h"

#include "program_message.h"
#include "response_format.h"
#include "scpi_error.h"

namespace zout::sim {

InstrumentLink::InstrumentLink(asio::io_context& io, std::unique_ptr<LinkStream> stream, ScpiInstrument& instrument,
                               const SimClock& clock, std::function<void()> on_closing)
    : io_(io),
      stream_(std::move(stream)),
      instrument_(instrument),
      clock_(clock),
      on_closing_(std::move(on_closing)),
      timer_(io),
      write_timer_(io),
      garbage_(fnv1a_64(instrument.role() + "-garbage")) {}

void InstrumentLink::start() {
  if (started_) return;
  started_ = true;
  read_more();
}

void InstrumentLink::close() {
  if (closed_) return;
  closed_ = true;
  const auto keep_alive = shared_from_this();  // the callback may drop the owner's reference
  if (on_closing_) {
    const auto callback = std::move(on_closing_);
    on_closing_ = nullptr;
    callback();
  }
  timer_.cancel();
  write_timer_.cancel();
  stream_->close();
  acquisition_.reset();
  lines_.clear();
  out_.clear();
}

void InstrumentLink::read_more() {
  stream_->async_read_some(asio::buffer(chunk_), [self = shared_from_this()](const asio::error_code& ec, std::size_t n) {
    if (self->closed_) return;
    if (ec) {
      self->close();  // the peer went away (EOF, reset, hang-up)
      return;
    }
    self->take_bytes(self->chunk_.data(), n);
    if (!self->closed_) self->read_more();
  });
}

void InstrumentLink::take_bytes(const char* data, std::size_t size) {
  for (std::size_t i = 0; i < size; ++i) {
    const char c = data[i];
    if (c == '\n' || c == '\r') {
      if (!discarding_ && !partial_.empty()) {
        if (lines_.size() >= max_queued_lines) {
          instrument_.push_error(scpi_code::input_buffer_overrun, "too many program messages waiting");
        } else {
          lines_.push_back(std::move(partial_));
        }
      }
      partial_.clear();
      discarding_ = false;
      continue;
    }
    if (discarding_) continue;
    partial_ += c;
    if (partial_.size() > max_line_bytes) {
      instrument_.push_error(scpi_code::input_buffer_overrun, "program message longer than 65536 bytes");
      partial_.clear();
      discarding_ = true;
    }
  }
  if (!busy_ && !lines_.empty()) next_message();
}

void InstrumentLink::next_message() {
  if (closed_) return;
  if (lines_.empty()) {
    busy_ = false;
    return;
  }
  busy_ = true;
  const std::string line = std::move(lines_.front());
  lines_.pop_front();
  if (instrument_.faults().consume(FaultKind::drop)) {
    close();
    return;
  }
  units_ = ProgramMessageParser::split_units(line);
  unit_index_ = 0;
  level_ = HeaderTree::Level{};
  replies_.clear();
  if (units_.empty()) {
    end_message();
    return;
  }
  wait(ScpiInstrument::command_time_s, [this] { run_unit(); });
}

void InstrumentLink::run_unit() {
  const CommandOutcome outcome = instrument_.execute(units_[unit_index_], level_, clock_.now_s());
  ++unit_index_;
  if (outcome.skip_rest) unit_index_ = units_.size();
  after_unit(outcome);
}

void InstrumentLink::after_unit(const CommandOutcome& outcome) {
  if (outcome.reply) replies_.push_back(*outcome.reply);
  acquisition_ = outcome.acquisition;
  wait(outcome.busy_s, [this] {
    if (!acquisition_) {
      next_unit();
      return;
    }
    acquisition_start_s_ = clock_.now_s();
    sample_index_ = 0;
    take_sample();
  });
}

void InstrumentLink::take_sample() {
  const auto& offsets = acquisition_->sample_offsets_s();
  const double due_s = acquisition_start_s_ + offsets[sample_index_];
  wait(due_s - clock_.now_s(), [this] {
    try {
      acquisition_->sample(sample_index_, clock_.now_s());
      if (++sample_index_ < acquisition_->sample_offsets_s().size()) {
        take_sample();
        return;
      }
      replies_.push_back(acquisition_->finish());
    } catch (const std::exception& e) {
      // The circuit could not be simulated: an execution error and a "not a number" reply.
      instrument_.push_error(-200, e.what());
      replies_.push_back(format_nr3(scpi_not_a_number));
    }
    acquisition_.reset();
    next_unit();
  });
}

void InstrumentLink::next_unit() {
  if (unit_index_ < units_.size()) {
    wait(ScpiInstrument::command_time_s, [this] { run_unit(); });
    return;
  }
  end_message();
}

void InstrumentLink::end_message() {
  if (!replies_.empty()) {
    std::string reply;
    for (const auto& part : replies_) reply += (reply.empty() ? "" : ";") + part;
    replies_.clear();
    send_reply(reply);
  }
  // Posted, so a long run of empty messages cannot deepen the stack.
  asio::post(io_, [self = shared_from_this()] { self->next_message(); });
}

void InstrumentLink::send_reply(const std::string& reply) {
  InstrumentFaults& faults = instrument_.faults();
  if (faults.consume(FaultKind::stall)) return;
  std::string bytes = reply;
  if (faults.consume(FaultKind::garbage)) {
    // Bytes with the high bit set: never a terminator, never valid SCPI response data.
    bytes.clear();
    const std::size_t length = std::max<std::size_t>(12, reply.size());
    for (std::size_t i = 0; i < length; ++i) bytes += static_cast<char>(0x80 | (garbage_.next_u64() & 0x7f));
  }
  bytes += '\n';
  if (faults.consume(FaultKind::split)) {
    for (char c : bytes) out_.push_back({std::string(1, c), split_byte_gap_s});
  } else {
    out_.push_back({std::move(bytes), 0.0});
  }
  write_next();
}

void InstrumentLink::write_next() {
  if (closed_ || writing_ || out_.empty()) return;
  writing_ = true;
  const auto write = [self = shared_from_this()] {
    if (self->closed_) return;
    const Chunk& chunk = self->out_.front();
    self->stream_->async_write(asio::buffer(chunk.bytes), [self](const asio::error_code& ec, std::size_t) {
      if (self->closed_) return;
      self->writing_ = false;
      if (ec) {
        self->close();
        return;
      }
      self->out_.pop_front();
      self->write_next();
    });
  };
  const double delay_s = out_.front().delay_before_s;
  if (delay_s <= 0.0) {
    write();
    return;
  }
  write_timer_.expires_after(std::chrono::duration_cast<std::chrono::steady_clock::duration>(
      std::chrono::duration<double>(delay_s)));
  write_timer_.async_wait([self = shared_from_this(), write](const asio::error_code& ec) {
    if (ec || self->closed_) return;
    write();
  });
}

void InstrumentLink::wait(double seconds, std::function<void()> then) {
  if (closed_) return;
  if (seconds <= 0.0) {
    asio::post(io_, [self = shared_from_this(), then = std::move(then)] {
      if (!self->closed_) then();
    });
    return;
  }
  timer_.expires_after(std::chrono::duration_cast<std::chrono::steady_clock::duration>(
      std::chrono::duration<double>(seconds)));
  timer_.async_wait([self = shared_from_this(), then = std::move(then)](const asio::error_code& ec) {
    if (ec || self->closed_) return;
    then();
  });
}

}  // namespace zout::sim
