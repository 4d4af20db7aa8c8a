#include "sweep_analysis.h"

#include <algorithm>
#include <cmath>
#include <stdexcept>
#include <string>

#include "daemon/analysis/cascade_model.h"
#include "daemon/analysis/input_checks.h"
#include "daemon/analysis/rated_step.h"
#include "daemon/analysis/ripple.h"

namespace zout::analysis {

namespace {

void validate(std::span<const SweepPoint> points, const SweepParameters& p) {
  if (p.stages < 1) {
    throw std::invalid_argument("stages must be >= 1 (" + std::to_string(p.stages) + ")");
  }
  require_positive(p.capacitance_farads, "capacitance_farads");
  require_positive(p.frequency_hz, "frequency_hz");
  require_positive(p.amplitude_volts_peak, "amplitude_volts_peak");
  if (p.operating_amps) require_non_negative(*p.operating_amps, "operating_amps");
  if (!(p.fit_max_amps > 0.0)) {
    throw std::invalid_argument("fit_max_amps must be > 0 (" + format_number(p.fit_max_amps) + ")");
  }
  if (p.rated_amps) require_positive(*p.rated_amps, "rated_amps");
  if (p.linear_min_amps) require_non_negative(*p.linear_min_amps, "linear_min_amps");
  require_positive(p.temperature_kelvin, "temperature_kelvin");
  validate_limits(p.limits);
  for (std::size_t i = 0; i < points.size(); ++i) {
    const std::string name = "points[" + std::to_string(i) + "]";
    const SweepPoint& s = points[i];
    require_non_negative(s.set_amps, name + ".set_amps");
    if (s.measured_amps) require_finite(*s.measured_amps, name + ".measured_amps");
    require_finite(s.dc_volts, name + ".dc_volts");
    require_non_negative(s.dc_volts_sigma, name + ".dc_volts_sigma");
    if (s.ac_rms_volts) require_non_negative(*s.ac_rms_volts, name + ".ac_rms_volts");
    require_all_finite(s.ripple_samples_volts, name + ".ripple_samples_volts");
  }
}

// The current a fit uses for a point: zero step → 0; else the load's reading (clamped at 0:
// a tiny negative offset reading is no negative load), else the set step.
double fit_current(const SweepPoint& s) {
  if (s.set_amps == 0.0) return 0.0;
  return std::max(0.0, s.measured_amps.value_or(s.set_amps));
}

Computed<double> value_of(const Computed<Estimate>& e) {
  return e ? Computed<double>::of(e->value) : Computed<double>::missing(e.reason());
}

}  // namespace

const char* to_string(RippleMethod method) {
  switch (method) {
    case RippleMethod::sampled: return "sampled";
    case RippleMethod::sawtooth_from_rms: return "sawtooth_from_rms";
    case RippleMethod::none: return "none";
  }
  return "?";
}

SweepResult analyze_sweep(std::span<const SweepPoint> points, const SweepParameters& p) {
  validate(points, p);
  SweepResult r;
  r.model_source_ohms = model_source_ohms(p.stages, p.frequency_hz, p.capacitance_farads);

  std::vector<IvPoint> iv;
  for (const SweepPoint& s : points) iv.push_back(IvPoint{fit_current(s), s.dc_volts, s.dc_volts_sigma});

  ImpedanceOptions impedance;
  impedance.fit_max_amps = p.fit_max_amps;
  impedance.window_currents = p.window_currents;
  if (p.operating_amps) {
    impedance.operating_amps = p.operating_amps;
  } else {
    // The plan's smallest non-zero step, at the current the load measured there.
    const SweepPoint* smallest = nullptr;
    for (const SweepPoint& s : points) {
      if (s.set_amps > 0.0 && (!smallest || s.set_amps < smallest->set_amps)) smallest = &s;
    }
    if (smallest) impedance.operating_amps = fit_current(*smallest);
  }

  if (points.empty()) {
    r.v_oc = Computed<OpenCircuit>::missing("the sweep has no points");
  } else {
    r.v_oc = open_circuit_volts(iv, impedance);
  }
  r.z_out = impedance.operating_amps
                ? output_impedance(iv, impedance)
                : Computed<ImpedanceFit>::missing("the sweep has no non-zero load step");

  // Rated load: the plan's, else the largest step; measured at the step nearest to it.
  double largest_step = 0.0;
  for (const SweepPoint& s : points) largest_step = std::max(largest_step, s.set_amps);
  r.rated_amps = p.rated_amps.value_or(largest_step);
  std::vector<const SweepPoint*> at_rated;
  {
    std::vector<double> set_amps;
    for (const SweepPoint& s : points) set_amps.push_back(s.set_amps);
    if (const auto rated_index = rated_step_index(set_amps, r.rated_amps)) {
      for (const SweepPoint& s : points) {
        if (s.set_amps == set_amps[*rated_index]) at_rated.push_back(&s);
      }
    }
  }

  if (r.v_oc && r.rated_amps > 0.0) {
    std::vector<IvPoint> rated_iv;
    for (const SweepPoint* s : at_rated) rated_iv.push_back(IvPoint{fit_current(*s), s->dc_volts, s->dc_volts_sigma});
    if (rated_iv.empty()) {
      r.chord_z_ohms = Computed<Estimate>::missing("chord impedance: no step within 5% of the rated load " +
                                                   format_number(r.rated_amps) + " A");
    } else {
      double mean_current = 0.0;
      for (const IvPoint& q : rated_iv) mean_current += q.current_amps / static_cast<double>(rated_iv.size());
      r.chord_z_ohms = mean_current > 0.0
                           ? chord_impedance_ohms(r.v_oc->volts, rated_iv, mean_current)
                           : Computed<Estimate>::missing("chord impedance: zero current at the rated step");
    }
  } else {
    r.chord_z_ohms = Computed<Estimate>::missing(
        r.v_oc ? "chord impedance: the sweep has no non-zero load step" : "chord impedance: " + r.v_oc.reason());
  }

  LinearRegionOptions linear;
  linear.min_amps = p.linear_min_amps;
  r.linear_region = linear_region_fit(iv, linear);
  if (!r.linear_region) {
    r.effective_capacitance_farads = Computed<Estimate>::missing(r.linear_region.reason());
  } else if (!(r.linear_region->source_ohms.value > 0.0)) {
    r.effective_capacitance_farads = Computed<Estimate>::missing(
        "effective capacitance: the linear region's resistance is not positive (" +
        format_number(r.linear_region->source_ohms.value) + " ohms)");
  } else {
    const Estimate& ohms = r.linear_region->source_ohms;
    Estimate c{effective_capacitance_farads(p.stages, p.frequency_hz, ohms.value), std::nullopt};
    if (ohms.standard_error) c.standard_error = c.value * *ohms.standard_error / ohms.value;
    r.effective_capacitance_farads = Computed<Estimate>::of(c);
  }

  DiodeCurveOptions diode;
  diode.temperature_kelvin = p.temperature_kelvin;
  r.diode_curve = fit_diode_curve(iv, diode);

  r.mean_diode_drop_volts =
      r.v_oc ? Computed<double>::of(mean_diode_drop_volts(p.stages, p.amplitude_volts_peak, r.v_oc->volts.value))
             : Computed<double>::missing("mean diode drop: " + r.v_oc.reason());

  for (std::size_t i = 0; i < points.size(); ++i) {
    const SweepPoint& s = points[i];
    PointResult pr;
    pr.set_amps = s.set_amps;
    pr.current_amps = iv[i].current_amps;
    pr.dc_volts = s.dc_volts;
    if (!s.ripple_samples_volts.empty()) {
      pr.ripple_method = RippleMethod::sampled;
      pr.ripple_pp_volts = Computed<double>::of(sampled_pp_volts(s.ripple_samples_volts));
    } else if (s.ac_rms_volts) {
      pr.ripple_method = RippleMethod::sawtooth_from_rms;
      pr.ripple_pp_volts = Computed<double>::of(sawtooth_pp_from_rms_volts(*s.ac_rms_volts));
    }
    pr.predicted_sag_volts =
        predicted_sag_volts(p.stages, pr.current_amps, p.frequency_hz, p.capacitance_farads);
    pr.predicted_ripple_pp_volts =
        predicted_ripple_pp_volts(p.stages, pr.current_amps, p.frequency_hz, p.capacitance_farads);
    pr.measured_sag_volts = r.v_oc ? Computed<double>::of(r.v_oc->volts.value - s.dc_volts)
                                   : Computed<double>::missing("measured sag: " + r.v_oc.reason());
    r.points.push_back(std::move(pr));
  }

  // Ripple at the rated load: mean over the points at the rated step that have a ripple figure.
  if (at_rated.empty()) {
    const std::string why =
        r.rated_amps > 0.0 ? "ripple: no step within 5% of the rated load " + format_number(r.rated_amps) + " A"
                           : "ripple: the sweep has no non-zero load step";
    r.ripple_pp_volts_at_rated = Computed<double>::missing(why);
    r.ripple_rms_volts_at_rated = Computed<double>::missing(why);
  } else {
    double sum_pp = 0.0;
    double sum_rms = 0.0;
    std::size_t n_pp = 0;
    std::size_t n_rms = 0;
    for (std::size_t i = 0; i < points.size(); ++i) {
      if (std::find(at_rated.begin(), at_rated.end(), &points[i]) == at_rated.end()) continue;
      if (r.points[i].ripple_pp_volts) {
        sum_pp += r.points[i].ripple_pp_volts.value();
        ++n_pp;
      }
      if (points[i].ac_rms_volts) {
        sum_rms += *points[i].ac_rms_volts;
        ++n_rms;
      }
    }
    const std::string why = "ripple: no ripple reading at the rated load " + format_number(r.rated_amps) + " A";
    r.ripple_pp_volts_at_rated =
        n_pp > 0 ? Computed<double>::of(sum_pp / static_cast<double>(n_pp)) : Computed<double>::missing(why);
    r.ripple_rms_volts_at_rated =
        n_rms > 0 ? Computed<double>::of(sum_rms / static_cast<double>(n_rms)) : Computed<double>::missing(why);
  }

  r.figures.v_oc_volts = r.v_oc ? Computed<double>::of(r.v_oc->volts.value)
                                : Computed<double>::missing(r.v_oc.reason());
  r.figures.z_out_ohms = r.z_out ? Computed<double>::of(r.z_out->z_out_ohms.value)
                                 : Computed<double>::missing(r.z_out.reason());
  r.figures.ripple_pp_volts_at_rated = r.ripple_pp_volts_at_rated;
  r.figures.effective_capacitance_farads = value_of(r.effective_capacitance_farads);
  r.figures.diode_drop_volts = r.mean_diode_drop_volts;
  r.verdict = judge_sweep(r.figures, p.limits);
  return r;
}

}  // namespace zout::analysis
