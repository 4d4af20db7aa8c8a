// The simulated instruments' command trees, common commands, status and error queue, checked
// by executing program messages directly (no sockets) against a fixture that records what the
// instruments set and returns an output the test chooses.
#include <catch2/catch.hpp>

#include <cmath>

#include "drivers/sim/bench/fixture.h"
#include "drivers/sim/bench/load_instrument.h"
#include "drivers/sim/bench/meter_instrument.h"
#include "drivers/sim/bench/program_message.h"
#include "drivers/sim/bench/source_instrument.h"
#include "drivers/sim/bench/switch_instrument.h"

using namespace zout::sim;

namespace {

// Records the settings it is given; its output is whatever the test puts in `output_state`.
class RecordingFixture : public Fixture {
 public:
  void set_drive(const DriveSettings& drive, double) override { drive_settings = drive; }
  void set_load(const LoadSettings& load, double) override { load_settings = load; }
  OutputState output(double) override { return closed ? output_state : OutputState{}; }
  void close_slot(int slot, double) override { closed = slot; }
  void open_all(double) override { closed.reset(); }
  std::optional<int> closed_slot() const override { return closed; }
  int slot_count() const override { return 8; }

  DriveSettings drive_settings;
  LoadSettings load_settings;
  OutputState output_state;
  std::optional<int> closed = 1;
};

// Runs one program message through `instrument` the way a link does, with acquisitions
// sampled at once; returns the response message ("" when there is none).
std::string run(ScpiInstrument& instrument, const std::string& message, double* busy_s = nullptr,
                double* acquisition_s = nullptr) {
  HeaderTree::Level level;
  std::string reply;
  for (const auto& unit : ProgramMessageParser::split_units(message)) {
    const CommandOutcome outcome = instrument.execute(unit, level, 1.0);
    if (busy_s) *busy_s += outcome.busy_s;
    std::optional<std::string> part = outcome.reply;
    if (outcome.acquisition) {
      const auto& offsets = outcome.acquisition->sample_offsets_s();
      for (std::size_t i = 0; i < offsets.size(); ++i) outcome.acquisition->sample(i, 1.0 + offsets[i]);
      if (acquisition_s) *acquisition_s = offsets.back();
      part = outcome.acquisition->finish();
    }
    if (part) reply += (reply.empty() ? "" : ";") + *part;
    if (outcome.skip_rest) break;
  }
  return reply;
}

// Every entry in the queue, oldest first, as codes.
std::vector<int> error_codes(ScpiInstrument& instrument) {
  std::vector<int> codes;
  for (;;) {
    const std::string entry = run(instrument, "SYST:ERR?");
    const int code = std::stoi(entry.substr(0, entry.find(',')));
    if (code == 0) return codes;
    codes.push_back(code);
  }
}

}  // namespace

TEST_CASE("the source follows its SCPI-1999 command tree in long, short and mixed forms", "[sim-bench]") {
  RecordingFixture fixture;
  SourceInstrument source(fixture);
  REQUIRE(run(source, "SOURce:FUNCtion:SHAPe SINusoid;:SOURce:FREQuency:CW 25000") == "");
  REQUIRE(fixture.drive_settings.frequency_hz == 25000.0);
  REQUIRE(run(source, "sour:volt:lev:imm:ampl 40;offs 0.5") == "");
  REQUIRE(fixture.drive_settings.amplitude_volts_peak == 40.0);
  REQUIRE(fixture.drive_settings.offset_volts == 0.5);
  REQUIRE(run(source, "VOLT 250 mV;:FREQ 2 kHz;:OUTP ON") == "");
  REQUIRE(fixture.drive_settings.amplitude_volts_peak == Approx(0.25));
  REQUIRE(fixture.drive_settings.frequency_hz == Approx(2000.0));
  REQUIRE(fixture.drive_settings.output_on);
  REQUIRE(run(source, "FREQ?;VOLT?;VOLT:OFFS?;:OUTP?") == "+2.000000000E+03;+2.500000000E-01;+5.000000000E-01;1");
  REQUIRE(run(source, "FREQ:FIX 1e4;:FREQ? MAX;:VOLT? MIN;:FUNC?") == "+1.000000000E+06;+0.000000000E+00;SIN");
  // Without the leading ':' OUTP? would continue under VOLT: (SCPI tree rule): undefined.
  REQUIRE(run(source, "VOLT:OFFS?;OUTP?") == "+5.000000000E-01");
  REQUIRE(error_codes(source) == std::vector<int>{-113});
  REQUIRE(fixture.drive_settings.frequency_hz == 1e4);
  REQUIRE(error_codes(source).empty());

  // *RST returns to the reset state and reaches the circuit.
  REQUIRE(run(source, "*RST;OUTP?;FREQ?") == "0;+1.000000000E+03");
  REQUIRE_FALSE(fixture.drive_settings.output_on);
  REQUIRE(fixture.drive_settings.amplitude_volts_peak == 0.1);
}

TEST_CASE("bad commands leave the standard codes in the error queue and change nothing", "[sim-bench]") {
  RecordingFixture fixture;
  SourceInstrument source(fixture);
  run(source, "FREQ 5000");
  REQUIRE(run(source, "*ESR?") == "128");  // power-on (PON) only, then cleared
  run(source, "FOO:BAR 1");                // -113 Undefined header
  run(source, "OUTP");                     // -109 Missing parameter
  run(source, "OUTP ON,OFF");              // -108 Parameter not allowed
  run(source, "FREQ 'fast'");              // -104 Data type error
  run(source, "FREQ 1.2.3");               // -102 Syntax error
  run(source, "FREQ 5 MEGA");              // -131 Invalid suffix
  run(source, "FREQ 2e9");                 // -222 Data out of range
  run(source, "FUNC SQUare");              // -141 Invalid character data: sine only
  run(source, "VOLT:OFFS 25;:VOLT 50");    // -221 Settings conflict: 25 + 50 > 60 V
  run(source, "OUTP:STAT? 1");             // -108 on a query
  run(source, "READ?");                    // -113: a meter query, not the source's
  run(source, "FREQ");                     // -109
  run(source, "*IDN");                     // -113: *IDN has only a query form
  REQUIRE(fixture.drive_settings.frequency_hz == 5000.0);
  REQUIRE(fixture.drive_settings.offset_volts == 25.0);
  REQUIRE(fixture.drive_settings.amplitude_volts_peak == 0.1);
  // IEEE 488.2 §11.5.1.1: command errors set CME (bit 5), execution errors EXE (bit 4).
  REQUIRE(run(source, "*ESR?") == "48");
  // SCPI-1999 Vol 1 §9 (from memory): STB bit 2 while the queue holds entries.
  REQUIRE(run(source, "*STB?") == "4");
  REQUIRE(error_codes(source) == std::vector<int>{-113, -109, -108, -104, -102, -131, -222, -141, -221, -108, -113,
                                                   -109, -113});
  REQUIRE(run(source, "*STB?") == "0");

  // A command error skips the rest of the message (IEEE 488.2 §6.1.6, from memory); an
  // execution error does not.
  run(source, "FOO;OUTP ON");
  REQUIRE_FALSE(fixture.drive_settings.output_on);
  run(source, "FREQ 1e12;OUTP ON");
  REQUIRE(fixture.drive_settings.output_on);
  REQUIRE(error_codes(source) == std::vector<int>{-113, -222});

  // *CLS empties the queue and the event status.
  run(source, "FOO;FOO");
  REQUIRE(run(source, "*CLS;*ESR?;SYST:ERR?;:SYST:ERR:COUN?") == "0;0,\"No error\";0");
}

TEST_CASE("common commands answer as IEEE 488.2 requires", "[sim-bench]") {
  RecordingFixture fixture;
  LoadInstrument load(fixture);
  REQUIRE(run(load, "*IDN?") == "zout-sim,SIM-LOAD-1,ZS-LOAD-0001,sim-0.1.0");
  REQUIRE(run(load, "*OPC?") == "1");
  REQUIRE(run(load, "*ESR?") == "128");
  run(load, "*OPC");
  REQUIRE(run(load, "*ESR?") == "1");  // OPC bit once everything before it is done
  REQUIRE(run(load, "*ESE 32;*ESE?;*SRE 36;*SRE?") == "32;36");
  run(load, "BOGUS");
  // ESB (bit 5) and the queue bit (bit 2), both enabled in SRE, so MSS (bit 6) too.
  REQUIRE(run(load, "*STB?") == "100");
  REQUIRE(run(load, "*TST?;*WAI;SYST:VERS?") == "0;1999.0");
  REQUIRE(run(load, "*ese?;*rst;*ese?") == "32;32");  // *RST leaves status registers alone
}

TEST_CASE("the error queue overflows into -350 after its 16 entries", "[sim-bench]") {
  RecordingFixture fixture;
  SwitchInstrument mux(fixture);
  for (int i = 0; i < 20; ++i) run(mux, "NOPE");
  const auto codes = error_codes(mux);
  REQUIRE(codes.size() == 16);
  REQUIRE(codes.front() == -113);
  REQUIRE(codes[14] == -113);
  REQUIRE(codes.back() == -350);
}

TEST_CASE("the load sets mode, levels and input, and reads back what it sinks", "[sim-bench]") {
  RecordingFixture fixture;
  LoadInstrument load(fixture);
  run(load, "SOURce:FUNCtion CURRent;:SOURce:CURRent:LEVel:IMMediate:AMPLitude 250 uA;:INPut:STATe ON");
  REQUIRE(fixture.load_settings.mode == LoadMode::constant_current);
  REQUIRE(fixture.load_settings.current_amps == Approx(250e-6));
  REQUIRE(fixture.load_settings.input_on);
  run(load, "FUNC RES;RES 2.2 MOHM");
  REQUIRE(fixture.load_settings.mode == LoadMode::constant_resistance);
  REQUIRE(fixture.load_settings.resistance_ohms == Approx(2.2e6));
  REQUIRE(run(load, "FUNC?;:RES?;:CURR?;:INP?") == "RES;+2.200000000E+06;+2.500000000E-04;1");
  run(load, "CURR 1");  // above the 100 mA limit
  REQUIRE(error_codes(load) == std::vector<int>{-222});

  fixture.output_state.load_current_amps = 248e-6;
  fixture.output_state.load_voltage_volts = 377.5;
  double acquisition_s = 0.0;
  REQUIRE(run(load, "MEAS:CURR:DC?", nullptr, &acquisition_s) == "+2.480000000E-04");
  REQUIRE(acquisition_s == Approx(LoadInstrument::readback_aperture_s));
  REQUIRE(run(load, "MEASure:SCALar:VOLTage:DC?") == "+3.775000000E+02");
  load.faults().inject(FaultKind::overload, 1);
  REQUIRE(run(load, "MEAS:VOLT?") == "+9.910000000E+37");
  REQUIRE(run(load, "MEAS:VOLT?") == "+3.775000000E+02");
}

TEST_CASE("the meter integrates NPLC cycles, takes SAMPle:COUNt readings and overloads above its range",
          "[sim-bench]") {
  RecordingFixture fixture;
  MeterConfig config;
  config.range_volts = 1000.0;
  config.noise_volts = 0.0;
  MeterInstrument meter(fixture, config, 1);
  fixture.output_state.dc_volts = 387.25;
  fixture.output_state.ripple_rms_volts = 0.012;

  double acquisition_s = 0.0;
  double busy_s = 0.0;
  run(meter, "CONFigure:VOLTage:DC 1000;:SENSe:VOLTage:DC:NPLCycles 10");
  REQUIRE(run(meter, "READ?", &busy_s, &acquisition_s) == "+3.872500000E+02");
  REQUIRE(acquisition_s == Approx(10.0 / 50.0));  // 10 power-line cycles at 50 Hz
  REQUIRE(busy_s == 0.0);

  acquisition_s = 0.0;
  run(meter, "SYST:LFR 60;:VOLT:NPLC 1;:SAMP:COUN 3");
  REQUIRE(run(meter, "READ?", nullptr, &acquisition_s) == "+3.872500000E+02,+3.872500000E+02,+3.872500000E+02");
  REQUIRE(acquisition_s == Approx(3.0 / 60.0));

  // CONFigure resets the count to 1; a range below the reading overloads (SCPI 9.91E37).
  run(meter, "CONF:VOLT:DC 10");
  REQUIRE(run(meter, "SAMP:COUN?;:READ?") == "+1.000000000E+00;+9.910000000E+37");
  REQUIRE(run(meter, "CONF?") == "\"VOLT:DC +1.000000000E+01\"");
  // Autorange follows the reading up to the top range; above it, overload.
  run(meter, "CONF:VOLT:DC AUTO");
  REQUIRE(run(meter, "READ?") == "+3.872500000E+02");
  fixture.output_state.dc_volts = 1200.0;
  REQUIRE(run(meter, "READ?") == "+9.910000000E+37");
  REQUIRE(run(meter, "CONF:VOLT:DC 2000") == "");
  REQUIRE(error_codes(meter) == std::vector<int>{-222});

  // DC to AC costs the function switch; AC reads the ripple's RMS.
  busy_s = 0.0;
  acquisition_s = 0.0;
  REQUIRE(run(meter, "CONF:VOLT:AC 1", &busy_s) == "");
  REQUIRE(busy_s == Approx(MeterInstrument::function_switch_s));
  REQUIRE(run(meter, "READ?", nullptr, &acquisition_s) == "+1.200000000E-02");
  REQUIRE(acquisition_s == Approx(MeterInstrument::ac_reading_s));
  busy_s = 0.0;
  REQUIRE(run(meter, "FUNC \"VOLT:AC\";FUNC?", &busy_s) == "\"VOLT:AC\"");
  REQUIRE(busy_s == 0.0);  // already AC: no switch
  REQUIRE(run(meter, "FUNC 'volt';:FUNC?", &busy_s) == "\"VOLT\"");
  REQUIRE(busy_s == Approx(MeterInstrument::function_switch_s));
  run(meter, "FUNC \"CURR\"");
  REQUIRE(error_codes(meter) == std::vector<int>{-224});

  // No unit connected: an open output reads 0 V.
  fixture.closed.reset();
  REQUIRE(run(meter, "MEAS:VOLT:DC?") == "+0.000000000E+00");
  meter.faults().inject(FaultKind::overload);
  REQUIRE(run(meter, "MEAS:VOLT:DC?") == "+9.910000000E+37");
  REQUIRE(run(meter, "MEAS:VOLT:DC?") == "+9.910000000E+37");
}

TEST_CASE("meter noise is seeded, Gaussian and scales with range and integration time", "[sim-bench]") {
  RecordingFixture fixture;
  fixture.output_state.dc_volts = 5.0;
  MeterConfig config;
  config.range_volts = 1000.0;
  config.noise_volts = 0.01;  // 10 mV RMS at 1 NPLC on the 1000 V range
  const auto readings = [&](std::uint64_t seed, const std::string& setup) {
    MeterInstrument meter(fixture, config, seed);
    run(meter, setup);
    std::vector<double> values;
    const std::string reply = run(meter, "READ?");
    std::size_t start = 0;
    while (start < reply.size()) {
      const auto end = reply.find(',', start);
      values.push_back(std::stod(reply.substr(start, end - start)));
      if (end == std::string::npos) break;
      start = end + 1;
    }
    return values;
  };
  const auto stddev = [](const std::vector<double>& values) {
    double mean = 0.0;
    for (double v : values) mean += v;
    mean /= static_cast<double>(values.size());
    double sum = 0.0;
    for (double v : values) sum += (v - mean) * (v - mean);
    return std::sqrt(sum / static_cast<double>(values.size() - 1));
  };
  const auto a = readings(7, "CONF:VOLT:DC 1000;:VOLT:NPLC 1;:SAMP:COUN 400");
  REQUIRE(a.size() == 400);
  REQUIRE(a == readings(7, "CONF:VOLT:DC 1000;:VOLT:NPLC 1;:SAMP:COUN 400"));  // same seed, same noise
  REQUIRE(a != readings(8, "CONF:VOLT:DC 1000;:VOLT:NPLC 1;:SAMP:COUN 400"));
  // 400 samples: the sample standard deviation is within about 10 % of σ (3.5 standard errors).
  REQUIRE(stddev(a) == Approx(0.01).epsilon(0.13));
  // 100 NPLC: σ/10; the 10 V range: σ/100.
  REQUIRE(stddev(readings(7, "CONF:VOLT:DC 1000;:VOLT:NPLC 100;:SAMP:COUN 400")) == Approx(0.001).epsilon(0.13));
  REQUIRE(stddev(readings(7, "CONF:VOLT:DC 10;:VOLT:NPLC 1;:SAMP:COUN 400")) == Approx(0.0001).epsilon(0.13));
}

TEST_CASE("the switch closes one slot at a time and reports its channels", "[sim-bench]") {
  RecordingFixture fixture;
  SwitchInstrument mux(fixture);
  double busy_s = 0.0;
  REQUIRE(run(mux, "ROUTe:CLOSe (@3)", &busy_s) == "");
  REQUIRE(busy_s == Approx(SwitchInstrument::relay_settle_s));
  REQUIRE(fixture.closed == 3);
  REQUIRE(run(mux, "ROUT:CLOS? (@1,3);:ROUT:OPEN? (@1:3);:ROUT:CLOS:STAT?") == "0,1;1,1,0;(@3)");
  run(mux, "ROUT:CLOS (@8)");
  REQUIRE(fixture.closed == 8);
  run(mux, "ROUT:OPEN (@1,2)");  // 8 stays closed
  REQUIRE(fixture.closed == 8);
  run(mux, "ROUT:OPEN (@8)");
  REQUIRE_FALSE(fixture.closed);
  run(mux, "ROUT:CLOS (@2);:ROUT:OPEN:ALL");
  REQUIRE(run(mux, "ROUT:CLOS:STAT?") == "(@)");
  run(mux, "ROUT:CLOS (@9)");     // -222: an 8-slot panel
  run(mux, "ROUT:CLOS (@1,2)");   // -221: one slot at a time
  run(mux, "ROUT:CLOS 3");        // -104: a channel list is needed
  run(mux, "ROUT:CLOS");          // -109
  run(mux, "ROUT:OPEN:ALL (@1)");  // -108
  REQUIRE(error_codes(mux) == std::vector<int>{-222, -221, -104, -109, -108});
  REQUIRE_FALSE(fixture.closed);
  run(mux, "ROUT:CLOS (@4);*RST");
  REQUIRE_FALSE(fixture.closed);  // *RST opens every channel
}
