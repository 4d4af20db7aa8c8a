// daemon/text: engineering-prefix numbers, the missing-value mark, values with their
// uncertainty, and times in UTC or local time with their offset.
#include <catch2/catch.hpp>

#include <cmath>
#include <cstdlib>
#include <ctime>
#include <limits>
#include <optional>
#include <string>

#include "daemon/text/missing_value.h"
#include "daemon/text/si_text.h"
#include "daemon/text/time_text.h"

using namespace zout::text;

namespace {

// Sets TZ for the test's life and puts the old value back after.
class TimeZoneSetting {
 public:
  explicit TimeZoneSetting(const char* zone) {
    const char* old = std::getenv("TZ");
    if (old) saved_ = old;
    ::setenv("TZ", zone, 1);
    ::tzset();
  }
  ~TimeZoneSetting() {
    if (saved_) {
      ::setenv("TZ", saved_->c_str(), 1);
    } else {
      ::unsetenv("TZ");
    }
    ::tzset();
  }
  TimeZoneSetting(const TimeZoneSetting&) = delete;
  TimeZoneSetting& operator=(const TimeZoneSetting&) = delete;

 private:
  std::optional<std::string> saved_;
};

}  // namespace

TEST_CASE("si_text writes an engineering prefix and fixed significant digits", "[text]") {
  CHECK(si_text(20e-6, "A", 3) == "20.0 µA");
  CHECK(si_text(2e-6, "A", 3) == "2.00 µA");
  CHECK(si_text(0.001, "A", 3) == "1.00 mA");
  CHECK(si_text(384.923, "V", 5) == "384.92 V");
  CHECK(si_text(194600.0, "Ω", 3) == "195 kΩ");
  CHECK(si_text(47e-9, "F", 3) == "47.0 nF");
  CHECK(si_text(1.5e-12, "F", 3) == "1.50 pF");
  CHECK(si_text(2.5e9, "Hz", 3) == "2.50 GHz");
  CHECK(si_text(189700.0, "Ω") == "189.7 kΩ");  // 4 digits by default
  CHECK(si_text(12.0, "") == "12.00");           // no unit, no trailing space
  CHECK(si_text(1.125, "V", 3) == "1.13 V");      // an exact half rounds away from zero
  CHECK(si_text(-1.125, "V", 3) == "-1.13 V");
}

TEST_CASE("si_text: negative values, zero, and the missing-value mark for NaN, inf and absence", "[text]") {
  CHECK(si_text(-0.25, "V", 3) == "-250 mV");
  CHECK(si_text(-119250.0, "Ω", 4) == "-119.3 kΩ");
  CHECK(si_text(0.0, "A") == "0 A");
  CHECK(si_text(-0.0, "A") == "0 A");
  CHECK(std::string(missing_value_mark) == "—");
  CHECK(si_text(std::nan(""), "V") == "—");
  CHECK(si_text(std::numeric_limits<double>::infinity(), "V") == "—");
  CHECK(si_text(-std::numeric_limits<double>::infinity(), "V") == "—");
  CHECK(si_text(std::optional<double>(), "V") == "—");
  CHECK(si_text(std::optional<double>(0.5), "V", 3) == "500 mV");
}

TEST_CASE("si_text: rounding that carries moves up a prefix or a digit, never past the digits asked", "[text]") {
  CHECK(si_text(999.95, "Ω", 4) == "1.000 kΩ");
  CHECK(si_text(999.94, "Ω", 4) == "999.9 Ω");
  CHECK(si_text(999.96e3, "Ω", 4) == "1.000 MΩ");
  CHECK(si_text(0.99996, "V", 4) == "1.000 V");
  CHECK(si_text(-999.95, "V", 4) == "-1.000 kV");
  CHECK(si_text(9.9996, "V", 4) == "10.00 V");
  CHECK(si_text(99.996, "V", 4) == "100.0 V");
  CHECK(si_text(1000.0, "V", 4) == "1.000 kV");
  CHECK(si_text(999.999e-9, "F", 3) == "1.00 µF");
}

TEST_CASE("si_text_compact drops trailing zeros, as a person writes a limit", "[text]") {
  CHECK(si_text_compact(383.0, "V") == "383 V");
  CHECK(si_text_compact(225000.0, "Ω") == "225 kΩ");
  CHECK(si_text_compact(21.5e-9, "F") == "21.5 nF");
  CHECK(si_text_compact(0.05, "V/h") == "50 mV/h");
  CHECK(si_text_compact(1.23456789, "V") == "1.23457 V");
  CHECK(si_text_compact(0.0, "V") == "0 V");
  CHECK(si_text_compact(std::nan(""), "V") == "—");
}

TEST_CASE("si_with_uncertainty writes both sides with prefix and unit, to the value's last digit", "[text]") {
  CHECK(si_with_uncertainty(189700.0, 11800.0, "Ω") == "189.7 kΩ ± 11.8 kΩ");
  CHECK(si_with_uncertainty(119250.0, 1530.0, "Ω") == "119.3 kΩ ± 1.5 kΩ");
  // An uncertainty below the value's last digit still gets 2 digits, with its own prefix.
  CHECK(si_with_uncertainty(392.4, 0.004, "V") == "392.4 V ± 4.0 mV");
  CHECK(si_with_uncertainty(104200.0, 870.0, "Ω") == "104.2 kΩ ± 870 Ω");
  // Larger than the value: at most `digits` digits.
  CHECK(si_with_uncertainty(0.02, 0.01, "V/h") == "20.00 mV/h ± 10.00 mV/h");
  CHECK(si_with_uncertainty(-0.5, 0.04, "V/h") == "-500.0 mV/h ± 40.0 mV/h");
  CHECK(si_with_uncertainty(200.0, -15.0, "Ω/h") == "200.0 Ω/h ± 15.0 Ω/h");  // the magnitude
  CHECK(si_with_uncertainty(0.0, 0.5, "V") == "0 V ± 500 mV");
  CHECK(si_with_uncertainty(12.0, 0.0, "V") == "12.00 V ± 0 V");
  CHECK(si_with_uncertainty(std::nan(""), 1.0, "V") == "—");
  CHECK(si_with_uncertainty(12.0, std::nan(""), "V") == "12.00 V ± —");
  CHECK(si_with_uncertainty(std::optional<double>(), std::optional<double>(1.0), "V") == "—");
  CHECK(si_with_uncertainty(std::optional<double>(12.0), std::optional<double>(), "V") == "12.00 V");
}

TEST_CASE("si_prefix_for picks the prefix that puts a magnitude in [1, 1000)", "[text]") {
  CHECK(si_prefix_for(1.00033e-3).symbol == "m");
  CHECK(si_prefix_for(1.00033e-3).factor == 1e-3);
  CHECK(si_prefix_for(999e-6).symbol == "µ");
  CHECK(si_prefix_for(392.4).symbol == "");
  CHECK(si_prefix_for(392.4).factor == 1.0);
  CHECK(si_prefix_for(-2500.0).symbol == "k");
  CHECK(si_prefix_for(0.0).symbol == "");
  CHECK(si_prefix_for(0.0).factor == 1.0);
  CHECK(si_prefix_for(std::nan("")).factor == 1.0);
  CHECK(si_prefix_for(1e-20).symbol == "p");  // held to p ... G
  CHECK(si_prefix_for(1e20).symbol == "G");
}

TEST_CASE("the store's UTC text reads back to its instant, other text does not", "[text]") {
  using namespace std::chrono;
  const auto t = parse_utc_text("2026-12-02T10:11:12.345Z");
  REQUIRE(t);
  // Reference program: GNU date, `date -u -d 2026-12-02T10:11:12Z +%s` prints 1796206272.
  CHECK(duration_cast<milliseconds>(t->time_since_epoch()).count() == 1796206272345LL);
  REQUIRE(parse_utc_text("2026-12-02T10:11:12Z"));
  CHECK(duration_cast<seconds>(parse_utc_text("2026-12-02T10:11:12Z")->time_since_epoch()).count() == 1796206272LL);
  CHECK_FALSE(parse_utc_text("2026-12-02 10:11:12Z"));
  CHECK_FALSE(parse_utc_text("2026-12-02T10:11:12"));
  CHECK_FALSE(parse_utc_text("2026-02-30T10:11:12Z"));
  CHECK_FALSE(parse_utc_text("2026-12-02T24:00:00Z"));
  CHECK_FALSE(parse_utc_text("2026-12-02T10:11:12.Z"));
  CHECK_FALSE(parse_utc_text(""));
}

TEST_CASE("display_time shows UTC with Z by default and local time with its offset on request", "[text]") {
  const std::string stored = "2026-12-02T10:11:12.987Z";
  CHECK(display_time(stored, TimeZoneChoice::utc) == "2026-12-02T10:11:12Z");  // truncated to the second
  {
    // Central European Time: UTC+1 in December, UTC+2 in July (POSIX TZ rule, not a zone file;
    // reference program: GNU date with the same TZ, `date -d ... +%FT%T%:z`).
    TimeZoneSetting cet("CET-1CEST,M3.5.0,M10.5.0/3");
    CHECK(display_time(stored, TimeZoneChoice::local) == "2026-12-02T11:11:12+01:00");
    CHECK(display_time("2026-07-01T23:30:00.000Z", TimeZoneChoice::local) == "2026-07-02T01:30:00+02:00");
    CHECK(display_time(stored, TimeZoneChoice::utc) == "2026-12-02T10:11:12Z");  // TZ does not touch UTC
  }
  {
    TimeZoneSetting newfoundland("NST+3:30");
    CHECK(display_time(stored, TimeZoneChoice::local) == "2026-12-02T06:41:12-03:30");
  }
  {
    TimeZoneSetting utc("UTC0");
    CHECK(display_time(stored, TimeZoneChoice::local) == "2026-12-02T10:11:12+00:00");
  }
  CHECK(display_time(*parse_utc_text(stored), TimeZoneChoice::utc) == "2026-12-02T10:11:12Z");
  CHECK(display_time("", TimeZoneChoice::utc) == "—");
  CHECK(display_time("yesterday", TimeZoneChoice::local) == "yesterday");
}

TEST_CASE("clock_time writes m:ss under an hour and h:mm:ss above", "[text]") {
  CHECK(clock_time(0.0) == "0:00");
  CHECK(clock_time(75.4) == "1:15");
  CHECK(clock_time(3599.4) == "59:59");
  CHECK(clock_time(3725.0) == "1:02:05");
  CHECK(clock_time(-1.0) == "—");
  CHECK(clock_time(std::nan("")) == "—");
}
