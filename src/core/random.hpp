// pcasweep/core/random.hpp — the one seeded mixing function everything random is built on.
//
// SplitMix64 (Steele, Lea & Flood, "Fast splittable pseudorandom number
// generators", OOPSLA 2014): splitmix64(x) adds the golden-ratio increment and
// applies the 64-bit finaliser, a bijection with good avalanche. Used as a
// counter-based generator (the randomized solver's Gaussian test matrix, the
// sample and bench-frame painters hash positions with it) and as a stream
// (SplitMix64Stream: the value of the n-th call is splitmix64(seed + n·γ)).
// The same bits on every machine and standard library: the bundled samples
// and every --seed result depend on it.
#pragma once

#include <cstdint>

namespace pcasweep {

inline constexpr std::uint64_t kSplitMix64Gamma = 0x9E3779B97F4A7C15ull;

// Takes any 64-bit value; returns its SplitMix64 hash.
inline std::uint64_t splitmix64(std::uint64_t x) {
  x += kSplitMix64Gamma;
  x = (x ^ (x >> 30)) * 0xBF58476D1CE4E5B9ull;
  x = (x ^ (x >> 27)) * 0x94D049BB133111EBull;
  return x ^ (x >> 31);
}

// The sequential generator: next() returns splitmix64(state) and advances the state by γ.
class SplitMix64Stream {
 public:
  explicit SplitMix64Stream(std::uint64_t seed) : state_(seed) {}
  std::uint64_t next() {
    const std::uint64_t r = splitmix64(state_);
    state_ += kSplitMix64Gamma;
    return r;
  }

 private:
  std::uint64_t state_;
};

}  // namespace pcasweep
