// tools/paint_noise.hpp — the seeded numbers and value noise both painters share
// (make_samples, make_bench_frame). Every value depends only on the seed and the
// arguments, the same on every machine and standard library: the bundled samples
// and the bench frames are reproducible from their seeds because of it.
#pragma once

#include <cmath>
#include <cstdint>
#include <random>

#include "core/random.hpp"

namespace paint {

inline constexpr double kPi = 3.14159265358979323846;

// SplitMix64 (core/random.hpp): a well-mixed 64-bit hash of a 64-bit value.
inline std::uint64_t mix64(std::uint64_t z) { return pcasweep::splitmix64(z); }

inline double unit_from_bits(std::uint64_t bits) { return double(bits >> 11) * 0x1.0p-53; }  // [0, 1)

// Seeded random numbers with our own distributions (portable across standard libraries).
class Rng {
 public:
  explicit Rng(std::uint64_t seed) : engine_(seed) {}
  std::uint64_t bits() { return engine_(); }
  double uniform() { return unit_from_bits(engine_()); }  // [0, 1)
  double uniform(double lo, double hi) { return lo + (hi - lo) * uniform(); }
  int integer(int lo, int hi) { return lo + int(uniform() * (hi - lo + 1)); }  // [lo, hi]
  // Standard normal by the Box–Muller transform; the second value is kept for the next call.
  double normal() {
    if (has_spare_) {
      has_spare_ = false;
      return spare_;
    }
    const double u1 = (double(engine_() >> 11) + 1.0) * 0x1.0p-53;  // (0, 1]: log is finite
    const double u2 = uniform();
    const double r = std::sqrt(-2.0 * std::log(u1));
    spare_ = r * std::sin(2.0 * kPi * u2);
    has_spare_ = true;
    return r * std::cos(2.0 * kPi * u2);
  }

 private:
  std::mt19937_64 engine_;
  double spare_ = 0.0;
  bool has_spare_ = false;
};

inline double clamp01(double v) { return v < 0.0 ? 0.0 : (v > 1.0 ? 1.0 : v); }
inline double smoothstep(double e0, double e1, double x) {
  const double t = clamp01((x - e0) / (e1 - e0));
  return t * t * (3.0 - 2.0 * t);
}
inline double lerp(double a, double b, double t) { return a + (b - a) * t; }

// Hash of an integer lattice point to [0, 1).
inline double lattice(std::int64_t ix, std::int64_t iy, std::uint64_t seed) {
  return unit_from_bits(mix64(
      seed ^ mix64(std::uint64_t(ix) * 0x9E3779B97F4A7C15ull ^ mix64(std::uint64_t(iy) + 0x632BE59BD9B4E019ull))));
}

// Value noise in [0, 1): hashed lattice values blended with a quintic fade.
inline double value_noise(double x, double y, std::uint64_t seed) {
  const double fx = std::floor(x), fy = std::floor(y);
  const auto ix = std::int64_t(fx), iy = std::int64_t(fy);
  double tx = x - fx, ty = y - fy;
  tx = tx * tx * tx * (tx * (tx * 6 - 15) + 10);
  ty = ty * ty * ty * (ty * (ty * 6 - 15) + 10);
  const double a = lattice(ix, iy, seed), b = lattice(ix + 1, iy, seed);
  const double c = lattice(ix, iy + 1, seed), d = lattice(ix + 1, iy + 1, seed);
  return lerp(lerp(a, b, tx), lerp(c, d, tx), ty);
}

// Fractal sum of `octaves` value-noise layers, normalised to [0, 1) (mean near 0.5).
inline double fbm(double x, double y, std::uint64_t seed, int octaves, double gain = 0.5) {
  double sum = 0.0, amplitude = 1.0, norm = 0.0;
  for (int o = 0; o < octaves; ++o) {
    sum += amplitude * value_noise(x, y, seed + std::uint64_t(o) * 0x51ED27ull);
    norm += amplitude;
    amplitude *= gain;
    x = x * 2.03 + 17.1;
    y = y * 2.03 - 5.3;
  }
  return sum / norm;
}

}  // namespace paint
