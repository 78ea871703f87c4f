// pcasweep/core/format.hpp — the one way numbers become text.
//
// Contract: every stage that prints a number (tables, charts, messages,
// rules' meanings) goes through these, so one value reads the same
// everywhere. Non-finite values have fixed words: "nan", "inf", "-inf"
// (format_fixed lets the caller name NaN, e.g. "n/a" in a table cell).
#pragma once

#include <string>

namespace pcasweep {

// `value` with up to `significant` significant digits, printf's %g:
// "48.13080361", "1e-05", "inf", "nan". Returns the text.
std::string format_real(double value, int significant = 10);

// `value` with exactly `decimals` places, printf's %.*f: "33.50"; NaN
// becomes `nan_text`, infinities "inf" / "-inf". Returns the text.
std::string format_fixed(double value, int decimals, const char* nan_text = "nan");

// A fraction as a percentage with up to `significant` significant digits
// and a "%" sign: 0.95 -> "95%", 0.99731 -> "99.73%". Returns the text.
std::string format_percent(double fraction, int significant = 4);

}  // namespace pcasweep
