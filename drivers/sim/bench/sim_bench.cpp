#include "sim_bench.h"

#include <cmath>
#include <stdexcept>

#include <fmt/format.h>

#include "scpi_error.h"

namespace zout::sim {

namespace {

using nlohmann::json;

// The instruments in port order.
constexpr const char* roles[] = {"source", "meter", "load", "switch"};

[[noreturn]] void bad(const std::string& op, const std::string& what) {
  throw std::invalid_argument(fmt::format("{}: {}", op, what));
}

void only_keys(const json& request, const std::string& op, std::initializer_list<const char*> allowed) {
  for (const auto& item : request.items()) {
    if (item.key() == "op") continue;
    bool known = false;
    for (const char* key : allowed) known = known || item.key() == key;
    if (!known) {
      std::string names = "op";
      for (const char* key : allowed) names += std::string(", ") + key;
      bad(op, fmt::format("unknown key \"{}\"; allowed: {}", item.key(), names));
    }
  }
}

int integer_field(const json& request, const std::string& op, const char* key) {
  if (!request.contains(key)) bad(op, fmt::format("\"{}\" is missing", key));
  const json& value = request.at(key);
  if (!value.is_number_integer() || value.get<long long>() < -1000000 || value.get<long long>() > 1000000) {
    bad(op, fmt::format("\"{}\" must be a whole number, got {}", key, value.dump()));
  }
  return value.get<int>();
}

std::string string_field(const json& request, const std::string& op, const char* key) {
  if (!request.contains(key)) bad(op, fmt::format("\"{}\" is missing", key));
  if (!request.at(key).is_string()) bad(op, fmt::format("\"{}\" must be a string, got {}", key, request.at(key).dump()));
  return request.at(key).get<std::string>();
}

json output_json(const OutputState& out) {
  return {{"dc_volts", out.dc_volts},
          {"ripple_pp_volts", out.ripple_pp_volts},
          {"ripple_rms_volts", out.ripple_rms_volts},
          {"load_current_amps", out.load_current_amps},
          {"load_voltage_volts", out.load_voltage_volts}};
}

}  // namespace

SimBench::SimBench(asio::io_context& io, SimConfig config, const SimBenchOptions& options)
    : io_(io),
      config_(std::move(config)),
      panel_(config_),
      source_(panel_),
      meter_(panel_, config_.meter, config_.seed ^ fnv1a_64("meter")),
      load_(panel_),
      switch_(panel_) {
  const auto port = [&](int offset) {
    return options.port_base == 0 ? std::uint16_t{0} : static_cast<std::uint16_t>(options.port_base + offset);
  };
  int offset = 0;
  for (const char* role : roles) {
    tcp_.push_back(std::make_unique<TcpInstrumentServer>(io_, *instrument(role), clock_, port(offset++)));
  }
  control_ = std::make_unique<ControlServer>(io_, port(offset), [this](const json& request) { return control(request); });
  if (options.pty) {
    for (const char* role : roles) {
      pty_.push_back(std::make_unique<PtyInstrumentServer>(io_, *instrument(role), clock_,
                                                           options.pty_directory + "/" + role));
    }
  }
}

SimBench::~SimBench() { stop(); }

ScpiInstrument* SimBench::instrument(const std::string& role) {
  if (role == "source") return &source_;
  if (role == "meter") return &meter_;
  if (role == "load") return &load_;
  if (role == "switch") return &switch_;
  return nullptr;
}

void SimBench::stop() {
  for (auto& server : tcp_) server->stop();
  for (auto& server : pty_) server->stop();
  if (control_) control_->stop();
}

json SimBench::addresses() const {
  json out;
  for (std::size_t i = 0; i < tcp_.size(); ++i) out[roles[i]] = fmt::format("tcp://127.0.0.1:{}", tcp_[i]->port());
  out["control"] = fmt::format("tcp://127.0.0.1:{}", control_->port());
  if (!pty_.empty()) {
    json links = json::object();
    json devices = json::object();
    for (std::size_t i = 0; i < pty_.size(); ++i) {
      links[roles[i]] = fmt::format("serial://{}?baud=115200", pty_[i]->link_path());
      devices[roles[i]] = pty_[i]->device_path();
    }
    out["pty"] = links;
    out["pty_devices"] = devices;
  }
  return out;
}

json SimBench::panel_state() const {
  json slots = json::array();
  for (int slot = 1; slot <= panel_.slot_count(); ++slot) {
    const auto unit = panel_.unit(slot);
    if (unit) {
      slots.push_back({{"slot", slot}, {"serial", unit->serial}, {"fault", to_string(unit->fault)}});
    } else {
      slots.push_back({{"slot", slot}, {"serial", nullptr}, {"fault", nullptr}});
    }
  }
  const auto closed = panel_.closed_slot();
  return {{"ok", true}, {"slots", slots}, {"closed_slot", closed ? json(*closed) : json(nullptr)}};
}

json SimBench::truth(const json& request) {
  only_keys(request, "truth", {"tolerance_volts"});
  const double now_s = clock_.now_s();
  json out = {{"ok", true}, {"time_s", now_s}};
  const auto closed = panel_.closed_slot();
  out["closed_slot"] = closed ? json(*closed) : json(nullptr);
  const auto unit = closed ? panel_.unit(*closed) : std::nullopt;
  out["serial"] = unit ? json(unit->serial) : json(nullptr);
  out["output"] = output_json(panel_.output(now_s));
  const auto steady = panel_.steady_state(now_s);
  out["steady_state"] = steady ? output_json(*steady) : json(nullptr);
  const auto time_constant = panel_.time_constant_s(now_s);
  out["time_constant_s"] = time_constant && std::isfinite(*time_constant) ? json(*time_constant) : json(nullptr);
  if (request.contains("tolerance_volts")) {
    const json& value = request.at("tolerance_volts");
    if (!value.is_number() || !(value.get<double>() > 0.0) || !std::isfinite(value.get<double>())) {
      bad("truth", fmt::format("\"tolerance_volts\" must be a number > 0, got {}", value.dump()));
    }
    const auto settle = panel_.settle_time_s(value.get<double>(), now_s);
    out["settle_time_s"] = settle ? json(*settle) : json(nullptr);
  }
  return out;
}

json SimBench::control(const json& request) {
  try {
    if (!request.contains("op") || !request.at("op").is_string()) {
      bad("request", "\"op\" is missing; one of ping, addresses, panel, insert_unit, remove_unit, inject_fault, "
                     "clear_fault, faults, truth");
    }
    const std::string op = request.at("op").get<std::string>();
    const double now_s = clock_.now_s();
    if (op == "ping") {
      only_keys(request, op, {});
      return {{"ok", true}, {"time_s", now_s}};
    }
    if (op == "addresses") {
      only_keys(request, op, {});
      json out = addresses();
      out["ok"] = true;
      return out;
    }
    if (op == "panel") {
      only_keys(request, op, {});
      return panel_state();
    }
    if (op == "insert_unit") {
      only_keys(request, op, {"slot", "serial", "fault"});
      const int slot = integer_field(request, op, "slot");
      const std::string serial = string_field(request, op, "serial");
      UnitFault fault = UnitFault::none;
      if (request.contains("fault")) {
        const std::string name = string_field(request, op, "fault");
        const auto named = unit_fault_named(name);
        if (!named) bad(op, fmt::format("unknown fault \"{}\"; allowed: {}", name, unit_fault_names()));
        fault = *named;
      }
      panel_.insert_unit(slot, serial, fault, now_s);
      return panel_state();
    }
    if (op == "remove_unit") {
      only_keys(request, op, {"slot"});
      panel_.remove_unit(integer_field(request, op, "slot"), now_s);
      return panel_state();
    }
    if (op == "inject_fault" || op == "clear_fault") {
      only_keys(request, op, {"instrument", "fault", "count", "codes"});
      const std::string role = string_field(request, op, "instrument");
      ScpiInstrument* target = instrument(role);
      if (target == nullptr) bad(op, fmt::format("unknown instrument \"{}\"; one of source, meter, load, switch", role));
      if (op == "clear_fault") {
        if (request.contains("count") || request.contains("codes")) bad(op, "takes only \"instrument\" and \"fault\"");
        if (!request.contains("fault")) {
          target->faults().clear_all();
        } else {
          const std::string name = string_field(request, op, "fault");
          const auto kind = fault_kind_named(name);
          if (!kind) bad(op, fmt::format("unknown fault \"{}\"; one of {}", name, fault_kind_names()));
          target->faults().clear(*kind);
        }
        return {{"ok", true}, {"faults", target->faults().describe()}};
      }
      const std::string name = string_field(request, op, "fault");
      if (name == "errors") {
        // Pushes entries into the error queue at once, as if commands had failed.
        if (request.contains("count")) bad(op, "\"errors\" takes \"codes\", not \"count\"");
        if (!request.contains("codes") || !request.at("codes").is_array() || request.at("codes").empty()) {
          bad(op, "\"errors\" needs \"codes\": a non-empty list of SCPI error codes, e.g. [-222]");
        }
        for (const auto& code : request.at("codes")) {
          if (!code.is_number_integer() || code.get<long long>() >= 0 || code.get<long long>() < -999) {
            bad(op, fmt::format("error code {} must be a whole number from -999 to -1", code.dump()));
          }
        }
        for (const auto& code : request.at("codes")) target->push_error(code.get<int>(), "injected");
        return {{"ok", true}, {"queued", target->errors().size()}};
      }
      const auto kind = fault_kind_named(name);
      if (!kind) bad(op, fmt::format("unknown fault \"{}\"; one of {}, errors", name, fault_kind_names()));
      if (request.contains("codes")) bad(op, "\"codes\" belongs to the \"errors\" fault");
      std::optional<int> count;
      if (request.contains("count")) {
        count = integer_field(request, op, "count");
        if (*count < 1) bad(op, fmt::format("\"count\" must be at least 1, got {}", *count));
      }
      target->faults().inject(*kind, count);
      return {{"ok", true}, {"faults", target->faults().describe()}};
    }
    if (op == "faults") {
      only_keys(request, op, {});
      json out = {{"ok", true}};
      for (const char* role : roles) out[role] = instrument(role)->faults().describe();
      return out;
    }
    if (op == "truth") return truth(request);
    bad(op, "unknown op; one of ping, addresses, panel, insert_unit, remove_unit, inject_fault, clear_fault, faults, "
            "truth");
  } catch (const std::exception& e) {
    return {{"ok", false}, {"error", e.what()}};
  }
}

}  // namespace zout::sim
