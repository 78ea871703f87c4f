// tests/codec/adaptive_coder_test.cpp — the context-adaptive range coder (entropy coder 3).
#include <doctest/doctest.h>

#include <climits>
#include <cmath>
#include <cstring>
#include <random>

#include "codec/adaptive_coder.hpp"
#include "codec/container.hpp"
#include "codec/image_codec.hpp"
#include "core/error.hpp"
#include "pipeline/image_study.hpp"

using namespace pcasweep;

namespace {

// Two-sided geometric integers P(q) = (1−θ)/(1+θ)·θ^|q|: zero with probability (1−θ)/(1+θ),
// else |q| = 1 + G with G geometric (P(G = j) = (1−θ)θ^j, by inverse transform of a uniform)
// and a fair sign — the same law, since P(|q| = k | q ≠ 0) = (1−θ)θ^(k−1).
std::int32_t two_sided_geometric(std::mt19937_64& rng, double theta) {
  std::uniform_real_distribution<double> u(0.0, 1.0);
  if (u(rng) < (1.0 - theta) / (1.0 + theta)) return 0;
  const std::int32_t k = std::int32_t(std::floor(std::log(1.0 - u(rng)) / std::log(theta))) + 1;
  return u(rng) < 0.5 ? k : -k;
}

std::vector<std::int32_t> random_stream(std::size_t n, std::uint64_t seed) {
  std::mt19937_64 rng(seed);
  std::vector<std::int32_t> v(n);
  for (std::size_t i = 0; i < n; ++i) {
    switch (rng() % 4) {
      case 0: v[i] = 0; break;
      case 1: v[i] = std::int32_t(rng() % 7) - 3; break;
      case 2: v[i] = std::int32_t(std::int64_t(rng() % 2001) - 1000); break;
      default: v[i] = std::int32_t(std::uint32_t(rng())); break;  // anything in int32
    }
  }
  return v;
}

template <typename F>
bool throws_data_error(F&& f) {
  try {
    f();
  } catch (const Error& e) {
    return e.kind() == ErrorKind::data && std::string(e.what()).find('\n') == std::string::npos;
  }
  return false;
}

}  // namespace

// Source: common practice (a lossless coder must return exactly its input); the extremes of
// int32 are the binarisation's edge cases (e = 31 ends the unary code without its zero).
TEST_CASE("adaptive coder: random integer streams, extremes and empty streams round-trip") {
  struct Shape { std::size_t nx, ny, planes, m; };
  const Shape shapes[] = {{7, 5, 1, 9}, {1, 13, 3, 4}, {16, 1, 1, 1}, {3, 3, 4, 0}, {5, 4, 2, 17}};
  std::uint64_t seed = 1;
  for (const Shape& s : shapes) {
    CoefficientGrid g{s.nx, s.ny, s.planes};
    std::vector<std::int32_t> q = random_stream(g.observations() * s.m, seed++);
    const std::int32_t extremes[] = {INT32_MIN, INT32_MAX, INT32_MIN + 1, -(1 << 30), 1 << 30, -1, 1, 0};
    for (std::size_t i = 0; i < q.size() && i < 8; ++i) q[i * 3 % q.size()] = extremes[i];
    for (CodingOrder order : {CodingOrder::patch_major, CodingOrder::component_major}) {
      CAPTURE(s.nx);
      CAPTURE(s.m);
      const std::string bytes = code_coefficients(q, s.m, g, order);
      CHECK(bytes.size() >= 5);
      CHECK(decode_coefficients(bytes, s.m, g, order, "t.pcsc") == q);
    }
  }
  // All of int32's extremes in one stream, and a long run of zeros then one large value.
  CoefficientGrid line{64, 1, 1};
  std::vector<std::int32_t> edge(64, 0);
  edge[63] = INT32_MIN;
  edge[0] = INT32_MAX;
  CHECK(decode_coefficients(code_coefficients(edge, 1, line, CodingOrder::patch_major), 1, line,
                            CodingOrder::patch_major, "t") == edge);
  // Basis entries: the whole int16 range.
  std::mt19937_64 rng(9);
  std::vector<std::int16_t> v(40 * 7);
  for (auto& x : v) x = std::int16_t(std::int32_t(rng() % 65536) - 32768);
  v[0] = -32768;
  v[1] = 32767;
  CHECK(decode_columns(code_columns(v, 40), 40, 7, "t") == v);
}

// Source: Shannon's source coding theorem (Cover & Thomas, Elements of Information Theory, 2nd
// ed., Theorem 5.3.1, from memory): no uniquely decodable code beats n·H bits on average for n
// i.i.d. symbols, and an adaptive arithmetic coder approaches n·H. Two-sided geometric source
// P(q) = (1−θ)/(1+θ)·θ^|q|, θ = 0.6: H is summed here from the formula. The 4 % ceiling is our
// tolerance for learning ~2000 adaptive contexts; the floor allows 0.5 % of sampling luck.
TEST_CASE("adaptive coder: code length of an i.i.d. source is within a few percent of its entropy") {
  const double theta = 0.6;
  double H = 0.0;
  const double p0 = (1.0 - theta) / (1.0 + theta);
  H -= p0 * std::log2(p0);
  for (int k = 1; k < 200; ++k) {
    const double p = p0 * std::pow(theta, k);  // each of ±k
    H -= 2.0 * p * std::log2(p);
  }
  std::mt19937_64 rng(2026);
  CoefficientGrid g{64, 64, 1};
  const std::size_t m = 16;
  std::vector<std::int32_t> q(g.observations() * m);
  for (auto& x : q) x = two_sided_geometric(rng, theta);
  // The sample really has this law: its empirical zero frequency is near p0.
  const double zeros = double(std::count(q.begin(), q.end(), 0)) / double(q.size());
  CHECK(zeros == doctest::Approx(p0).epsilon(0.02));
  const std::string bytes = code_coefficients(q, m, g, CodingOrder::patch_major);
  const double bits = 8.0 * double(bytes.size()), bound = H * double(q.size());
  MESSAGE("entropy " << H << " bits/value, coded " << bits / double(q.size()) << " bits/value");
  CHECK(bits >= 0.995 * bound);
  CHECK(bits <= 1.04 * bound);
}

// Source: issue 5 (untrusted input: a damaged stream gives a clear error or a wrong but bounded
// decode, never undefined behaviour; the container's CRC-32 catches the rest).
TEST_CASE("adaptive coder: truncated, extended and flipped streams are refused or decode to bounded values") {
  CoefficientGrid g{9, 7, 1};
  const std::size_t m = 6;
  const std::vector<std::int32_t> q = random_stream(g.observations() * m, 77);
  const std::string good = code_coefficients(q, m, g, CodingOrder::patch_major);
  REQUIRE(decode_coefficients(good, m, g, CodingOrder::patch_major, "t") == q);
  // Every truncation is refused with a one-line data error.
  int refused = 0;
  for (std::size_t len = 0; len < good.size(); ++len)
    refused += throws_data_error([&] { decode_coefficients(good.substr(0, len), m, g, CodingOrder::patch_major, "t"); });
  CHECK(refused == int(good.size()));
  CHECK(throws_data_error([&] { decode_coefficients(good + '\0', m, g, CodingOrder::patch_major, "t"); }));
  CHECK(throws_data_error([&] { decode_coefficients(good + "xyz", m, g, CodingOrder::patch_major, "t"); }));
  // Each single-bit flip: refused, or a decode that differs (never silently the same values).
  int flips = 0, caught = 0, differ = 0;
  for (std::size_t pos = 0; pos < good.size(); ++pos)
    for (int bit = 0; bit < 8; bit += 3) {
      std::string bad = good;
      bad[pos] = char(bad[pos] ^ (1 << bit));
      ++flips;
      try {
        differ += decode_coefficients(bad, m, g, CodingOrder::patch_major, "t") != q;
      } catch (const Error& e) {
        caught += e.kind() == ErrorKind::data;
      }
    }
  MESSAGE(flips << " flips: " << caught << " refused, " << differ << " decoded differently");
  CHECK(caught + differ == flips);
  CHECK(caught > flips / 2);
  // Random bytes (after the mandatory leading zero) never crash and never decode past the caps.
  std::mt19937_64 rng(5);
  for (int t = 0; t < 200; ++t) {
    std::string junk(5 + rng() % 60, '\0');
    for (std::size_t i = 1; i < junk.size(); ++i) junk[i] = char(rng());
    try {
      decode_coefficients(junk, m, g, CodingOrder::patch_major, "t");
    } catch (const Error& e) {
      CHECK(e.kind() == ErrorKind::data);
    }
  }
  CHECK(throws_data_error([&] { decode_coefficients(std::string("\x01\0\0\0\0", 5), m, g, CodingOrder::patch_major, "t"); }));
}

// Source: issue 5 (decode(encode(x)) is what sweep measures, whichever coder wrote the file) and
// docs/format.md (coder byte 27; part sizes at 84..115; R_q bounded by what R_q bytes can hold).
TEST_CASE("adaptive coder: files decode like their zstd twins; damaged range-coded parts are refused") {
  Image image = make_image(45, 29, 3, 8);
  std::mt19937_64 rng(3);
  for (int y = 0; y < image.height; ++y)
    for (int x = 0; x < image.width; ++x)
      for (int c = 0; c < 3; ++c) image.at(x, y, c) = std::uint16_t((x * 5 + y * 3 + c * 40 + rng() % 20) % 256);
  const PatchOptions patch{8, 8, 0, 0, ColourMode::joint};
  auto layout = std::make_unique<PatchLayout>(image, patch, "t.png");
  const ImageAnalysis a = analyze_sources({"t.png"}, {image}, std::move(layout), SolverSettings{});
  BasisChoice own;
  own.basis = &a.basis;
  CodecSettings s;
  s.k = 40;
  s.quality = 85;
  s.compare_entropy = true;
  const EncodeResult r = encode_image(image, patch, own, s, "t.png");
  CHECK(r.coder == EntropyCoder::adaptive);
  CHECK(r.bytes.size() == r.adaptive_file_bytes);
  CHECK(std::uint8_t(r.bytes[27]) == 3);
  s.entropy = EntropyStage::zstd;
  s.compare_entropy = false;
  const EncodeResult z = encode_image(image, patch, own, s, "t.png");
  CHECK(std::uint8_t(z.bytes[27]) == std::uint8_t(z.coder));
  CHECK(z.bytes.size() == std::min(z.varint_file_bytes, z.planes_file_bytes));
  const CodedImage ca = read_container(r.bytes, "a.pcsc"), cz = read_container(z.bytes, "z.pcsc");
  CHECK(ca.coefficients == cz.coefficients);
  CHECK(ca.column_fixed == cz.column_fixed);
  CHECK(decode_coded_image(r.bytes, "a.pcsc").samples == decode_coded_image(z.bytes, "z.pcsc").samples);

  const auto u64_at = [](const std::string& b, std::size_t at) {
    std::uint64_t v;
    std::memcpy(&v, b.data() + at, 8);
    return v;
  };
  const auto with_u64 = [](std::string b, std::size_t at, std::uint64_t v) {
    char raw[8];
    std::memcpy(raw, &v, 8);
    b.replace(at, 8, raw, 8);
    return b;
  };
  const auto resealed = [](std::string b) {
    const std::uint32_t crc = crc32_of(std::string_view(b).substr(0, b.size() - 4));
    std::memcpy(b.data() + b.size() - 4, &crc, 4);
    return b;
  };
  const std::string& good = r.bytes;
  const std::uint64_t Z = u64_at(good, 92), Rv = u64_at(good, 100), Rq = u64_at(good, 108);
  CHECK(kCodedImageHeaderSize + Z + Rv + Rq + 4 == good.size());
  const auto refused_with = [](const std::string& b, const std::string& needle) {
    try {
      decode_coded_image(b, "bad.pcsc");
    } catch (const Error& e) {
      CAPTURE(e.what());
      return e.kind() == ErrorKind::data && std::string(e.what()).find(needle) != std::string::npos;
    }
    return false;
  };
  // Part sizes that do not add up, a coefficient stream too short to hold N·m values (4 bytes;
  // the 6000-values-a-byte bound itself needs N·m > 30000, more than this small image has), a
  // zstd coder with range-coded parts, an unknown coder.
  CHECK(refused_with(resealed(with_u64(good, 108, Rq + 1)), "parts"));
  CHECK(refused_with(resealed(with_u64(with_u64(good, 100, Rv + Rq - 4), 108, 4)), "cannot hold"));
  std::string as_zstd = good;
  as_zstd[27] = 1;
  CHECK(refused_with(resealed(as_zstd), "body"));
  std::string unknown = good;
  unknown[27] = 4;
  CHECK(refused_with(resealed(unknown), "entropy coder 4"));
  // Flipped bytes inside the range-coded parts with a valid CRC (a crafted file): refused, or an
  // image of the declared size (wrong but bounded); without resealing, the CRC refuses them.
  CHECK(refused_with(with_u64(good, 116 + Z + Rv / 2, u64_at(good, 116 + Z + Rv / 2) ^ 1), "checksum"));
  int bounded = 0, refused = 0;
  for (std::size_t at = 116 + Z; at + 4 < good.size(); at += 97) {
    std::string bad = good;
    bad[at] = char(bad[at] ^ 0x20);
    try {
      const Image im = decode_coded_image(resealed(bad), "bad.pcsc");
      bounded += im.width == image.width && im.height == image.height && im.samples.size() == image.samples.size();
    } catch (const Error& e) {
      refused += e.kind() == ErrorKind::data;
    }
  }
  MESSAGE(bounded << " bounded decodes, " << refused << " refused");
  CHECK(bounded + refused == int((good.size() - 4 - (116 + Z) + 96) / 97));
}
