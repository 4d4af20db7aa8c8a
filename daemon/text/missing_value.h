#pragma once
// The one mark a user reads where a figure is absent or not finite: in the report, `zout
// runs`, `zout status`, `zout watch` and `zout check` alike. Files (exports, --json) write
// null instead.

namespace zout::text {

inline constexpr char missing_value_mark[] = "—";

}  // namespace zout::text
