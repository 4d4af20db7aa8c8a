#pragma once
// The names of the figures as a user reads them, in verdict reasons, reports, plots and the
// client's live lines. (Files and JSON keep their snake_case keys, e.g. z_out_ohms.)

namespace zout::text::quantity {

inline constexpr char v_oc[] = "V_oc";
inline constexpr char z_out[] = "Z_out";
inline constexpr char ripple_pp[] = "ripple pp";
inline constexpr char effective_capacitance[] = "effective C";
inline constexpr char diode_drop[] = "diode drop";
inline constexpr char v_oc_drift[] = "V_oc drift";
inline constexpr char z_out_drift[] = "Z_out drift";
inline constexpr char ripple_drift[] = "ripple drift";

}  // namespace zout::text::quantity
