#include "measure/error_map.hpp"

#include <algorithm>
#include <cmath>

#include "core/error.hpp"

namespace pcasweep {

ErrorMap absolute_error_map(const Image& a, const Image& b) {
  if (a.width != b.width || a.height != b.height || a.channels != b.channels) {
    throw usage_error("error map: the two images differ in size or channels");
  }
  ErrorMap m;
  m.width = a.width;
  m.height = a.height;
  m.values.resize(std::size_t(a.width) * a.height);
  const int c = a.channels;
  for (std::size_t p = 0; p < m.values.size(); ++p) {
    double s = 0.0;
    for (int ch = 0; ch < c; ++ch) s += std::abs(double(a.samples[p * c + ch]) - double(b.samples[p * c + ch]));
    m.values[p] = s / c;
    m.max_value = std::max(m.max_value, m.values[p]);
  }
  return m;
}

}  // namespace pcasweep
