#include "core/format.hpp"

#include <cmath>
#include <cstdio>

namespace pcasweep {

std::string format_real(double value, int significant) {
  if (std::isnan(value)) return "nan";
  if (std::isinf(value)) return value > 0 ? "inf" : "-inf";
  char buffer[64];
  std::snprintf(buffer, sizeof buffer, "%.*g", significant, value);
  return buffer;
}

std::string format_fixed(double value, int decimals, const char* nan_text) {
  if (std::isnan(value)) return nan_text;
  if (std::isinf(value)) return value > 0 ? "inf" : "-inf";
  char buffer[512];
  std::snprintf(buffer, sizeof buffer, "%.*f", decimals, value);
  return buffer;
}

std::string format_percent(double fraction, int significant) {
  return format_real(fraction * 100.0, significant) + "%";
}

}  // namespace pcasweep
