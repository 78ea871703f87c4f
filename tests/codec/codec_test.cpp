// tests/codec/codec_test.cpp — quantiser, entropy stage, container and image codec.
#include <doctest/doctest.h>

#include <cmath>
#include <cstring>
#include <filesystem>

#include "codec/basis_file.hpp"
#include "codec/container.hpp"
#include "codec/dct.hpp"
#include "codec/entropy.hpp"
#include "codec/image_codec.hpp"
#include "codec/quantize.hpp"
#include "core/error.hpp"
#include "core/random.hpp"
#include "pipeline/codec_study.hpp"
#include "pipeline/image_study.hpp"

using namespace pcasweep;

namespace {

// A deterministic test image (SplitMix64 noise over gradients and sinusoids, own generator so
// every machine sees the same samples).
Image codec_scene(int width, int height, int channels, int bits, std::uint64_t seed) {
  Image im = make_image(width, height, channels, bits);
  SplitMix64Stream stream(seed);
  auto next = [&]() { return double(stream.next() >> 11) * 0x1.0p-53; };
  const double top = bits == 16 ? 65535.0 : 255.0;
  for (int y = 0; y < height; ++y)
    for (int x = 0; x < width; ++x)
      for (int c = 0; c < channels; ++c) {
        double v = 0.3 + 0.3 * x / width + 0.15 * std::sin(0.4 * x + c) * std::cos(0.23 * y) +
                   (x > width / 3 && y < height / 2 ? 0.2 : 0.0) + 0.05 * (next() - 0.5);
        im.at(x, y, c) = std::uint16_t(std::clamp(std::round(v * top), 0.0, top));
      }
  return im;
}

ImageAnalysis analysis_for(const Image& image, const PatchOptions& patch) {
  auto layout = std::make_unique<PatchLayout>(image, patch, "test.png");
  return analyze_sources({"test.png"}, {image}, std::move(layout), SolverSettings{});
}

// Asserts `f` throws pcasweep::Error of `kind` whose message is one line mentioning `needle`.
template <typename F>
void check_refused(F&& f, ErrorKind kind, const std::string& needle) {
  try {
    f();
    FAIL("accepted, expected an error mentioning: " << needle);
  } catch (const Error& e) {
    const std::string what = e.what();
    CAPTURE(what);
    CHECK(e.kind() == kind);
    CHECK(what.find('\n') == std::string::npos);
    CHECK(what.find(needle) != std::string::npos);
  }
}

}  // namespace

// Source: reverse water-filling for independent Gaussian components (Huang & Schultheiss 1963;
// Cover & Thomas, Elements of Information Theory, 2nd ed., Theorem 10.3.3, from memory):
// D_i = min(θ, λ_i) with Σ D_i = D, R = Σ_{λ_i > θ} ½ log2(λ_i / θ).
// Worked by hand for λ = {16, 8, 4, 1}, D = 8:
//   sorted 1, 4, 8, 16. θ ≤ 1 gives at most 4·1 = 4 < 8; θ in [1, 4] gives 1 + 3θ,
//   and 1 + 3·4 = 13 ≥ 8, so 1 + 3θ = 8, θ = 7/3 ≈ 2.3333.
//   D = {7/3, 7/3, 7/3, 1} (sum 7 + 1 = 8).
//   R = ½ log2(16·8·4 / (7/3)³) = ½ log2(512·27/343) = ½ log2(13824/343) ≈ ½ · 5.33285 ≈ 2.66643 bits.
//   Steps: √(12·7/3) = √28 ≈ 5.29150 for the three coded components, none for λ = 1.
TEST_CASE("codec: reverse water-filling against the hand-worked closed form") {
  Eigen::VectorXd lambda(4);
  lambda << 16, 8, 4, 1;
  const double theta = water_level_for_total(lambda, 8.0);
  CHECK(theta == doctest::Approx(7.0 / 3.0).epsilon(1e-14));
  const Eigen::VectorXd D = reverse_water_fill(lambda, theta);
  CHECK(D(0) == doctest::Approx(7.0 / 3.0));
  CHECK(D(1) == doctest::Approx(7.0 / 3.0));
  CHECK(D(2) == doctest::Approx(7.0 / 3.0));
  CHECK(D(3) == 1.0);
  CHECK(D.sum() == doctest::Approx(8.0).epsilon(1e-14));
  CHECK(gaussian_rate_bits(lambda, theta) == doctest::Approx(0.5 * std::log2(13824.0 / 343.0)).epsilon(1e-14));
  CHECK(gaussian_rate_bits(lambda, theta) == doctest::Approx(2.66643).epsilon(1e-5));
  const std::vector<float> steps = step_sizes(lambda, theta);
  REQUIRE(steps.size() == 4);
  for (int i = 0; i < 3; ++i) CHECK(steps[i] == doctest::Approx(std::sqrt(28.0)).epsilon(1e-7));
  CHECK(steps[3] == 0.0f);
  // Target PSNR: with d = 4, k = 4 and no dropped variance, MSE = D/4 = 2 → PSNR = 10·log10(255²/2).
  const double psnr = 10.0 * std::log10(255.0 * 255.0 / 2.0);
  CHECK(water_level_for_target_psnr(lambda, 0.0, 4, psnr, 255.0) == doctest::Approx(7.0 / 3.0).epsilon(1e-12));
  // With k = 2 (16, 8 coded) and 5 dropped: MSE 2 needs Σ_{coded} D = 8 − 5 = 3, θ = 1.5.
  CHECK(water_level_for_target_psnr(lambda.head(2), 5.0, 4, psnr, 255.0) == doctest::Approx(1.5).epsilon(1e-12));
  // Out of reach: the dropped variance alone (12 of 4 dims → MSE 3 > 2).
  check_refused([&] { water_level_for_target_psnr(lambda.head(1), 13.0, 4, psnr, 255.0); }, ErrorKind::usage,
                "out of reach");
  // Quality mapping (documented in quantize.hpp): Q = 50 → 30 dB.
  CHECK(quality_psnr_db(50) == 30.0);
  CHECK(water_level_for_psnr(30.0, 255.0) == doctest::Approx(65.025).epsilon(1e-12));
}

// Source: common practice (zig-zag mapping and LEB128 as in Protocol Buffers' sint32 varints).
TEST_CASE("codec: integer packings round-trip and refuse malformed data") {
  std::vector<std::int32_t> v = {0, -1, 1, -2, 2, 63, -64, 64, 1000000, -1000000, 1073741823, -1073741824};
  CHECK(zigzag(0) == 0u);
  CHECK(zigzag(-1) == 1u);
  CHECK(zigzag(1) == 2u);
  CHECK(zigzag(-2) == 3u);
  for (Packing p : {Packing::varint, Packing::planes}) {
    const std::string bytes = pack_integers(v, p);
    CHECK(unpack_integers(bytes, v.size(), p, "t") == v);
    check_refused([&] { unpack_integers(bytes.substr(0, bytes.size() - 1), v.size(), p, "t.pcsc"); }, ErrorKind::data,
                  "t.pcsc");
  }
  CHECK(pack_integers({300}, Packing::varint) == std::string("\xD8\x04", 2));  // zigzag(300) = 600 = 0x258
}

TEST_CASE("codec: DCT-II basis is orthonormal with the textbook first vectors") {
  const Eigen::MatrixXd c = dct_ii_matrix(8);
  CHECK((c.transpose() * c - Eigen::MatrixXd::Identity(8, 8)).cwiseAbs().maxCoeff() < 1e-14);
  CHECK(c(3, 0) == doctest::Approx(std::sqrt(1.0 / 8.0)).epsilon(1e-15));
  const Eigen::MatrixXd b = patch_dct_basis(4, 6, 3);
  CHECK(b.rows() == 72);
  CHECK((b.transpose() * b - Eigen::MatrixXd::Identity(72, 72)).cwiseAbs().maxCoeff() < 1e-13);
}

// Source: issue 5 ("decode(encode(x)) is bit-identical to the reconstruction that sweep measured").
// The sweep's decoded image (what it measured and wrote) is compared sample by sample with a
// fresh encode → decode of the same image at the same settings, for 8/16-bit, gray/colour, odd sizes.
TEST_CASE("codec: sweep measures exactly what decode(encode(x)) returns") {
  struct Case { int w, h, c, bits; ColourMode colour; };
  for (const Case& tc : {Case{37, 23, 1, 8, ColourMode::joint}, Case{41, 19, 3, 8, ColourMode::joint},
                         Case{29, 31, 3, 16, ColourMode::channels}, Case{33, 17, 1, 16, ColourMode::joint}}) {
    CAPTURE(tc.w);
    CAPTURE(tc.bits);
    const Image image = codec_scene(tc.w, tc.h, tc.c, tc.bits, 5);
    const PatchOptions patch{8, 8, 0, 0, tc.colour};
    const ImageAnalysis a = analysis_for(image, patch);
    SweepCoding coding;
    coding.enabled = true;
    coding.quality = 80;
    std::vector<std::string> files;
    coding.on_coded = [&](int, const std::string& bytes) { files.push_back(bytes); };
    std::vector<Image> measured;
    const std::vector<int> ks = {1, 3, 9, int(a.basis.rank())};
    const auto rows = sweep_ks(a, ks, [&](int, std::size_t, const Image& im) { measured.push_back(im); }, coding);
    REQUIRE(rows.size() == ks.size());
    for (std::size_t i = 0; i < ks.size(); ++i) {
      CAPTURE(ks[i]);
      CodecSettings s;
      s.k = ks[i];
      s.quality = 80;
      BasisChoice own;
      own.basis = &a.basis;
      const EncodeResult again = encode_image(image, patch, own, s, "test.png");
      CHECK(again.bytes == files[i]);
      CHECK(std::int64_t(again.bytes.size()) == rows[i].bytes);
      const Image decoded = decode_coded_image(again.bytes, "test.pcsc");
      CHECK(decoded.samples == measured[i].samples);
      CHECK(compare_images(image, decoded).mse == rows[i].quality.mse);
      if (i > 0) CHECK(rows[i].bits_per_pixel >= rows[i - 1].bits_per_pixel);  // more k never fewer bits
    }
  }
}

// Source: issue 5 (external basis: only its hash is stored; decoding refuses a different basis,
// encoding refuses a basis of another geometry).
TEST_CASE("codec: external basis round trip, hash and geometry checks") {
  const Image train = codec_scene(48, 40, 3, 8, 9), image = codec_scene(35, 27, 3, 8, 10);
  const PatchOptions patch{8, 8, 0, 0, ColourMode::joint};
  SavedBasis saved;
  saved.patch = patch;
  saved.channels = 3;
  saved.bit_depth = 8;
  saved.basis = analysis_for(train, patch).basis;
  const std::string file = write_basis_file(saved);
  const SavedBasis loaded = read_basis_file(file, "b.pcsb");
  CHECK(loaded.basis.components == saved.basis.components);  // float64: exact
  CHECK(loaded.basis.mean == saved.basis.mean);
  const Sha256 sha = sha256_of(file);
  CodecSettings s;
  s.k = 20;
  s.quality = 70;
  const EncodeResult r = encode_image(image, patch, BasisChoice{BasisKind::external, &loaded.basis, sha}, s, "x.png");
  const Image decoded = decode_coded_image(r.bytes, "x.pcsc", &loaded, &sha);
  CHECK(decoded.samples == decode_coded_image(r.bytes, "x.pcsc", &loaded, &sha).samples);
  CHECK(compare_images(image, decoded).psnr_db > 20.0);
  check_refused([&] { decode_coded_image(r.bytes, "x.pcsc"); }, ErrorKind::usage, "--basis");
  Sha256 other = sha;
  other[0] ^= 1;
  check_refused([&] { decode_coded_image(r.bytes, "x.pcsc", &loaded, &other); }, ErrorKind::data, "SHA-256");
  const Image gray = codec_scene(35, 27, 1, 8, 10);
  check_refused([&] { check_basis_geometry(loaded, gray, patch, "g.png", "b.pcsb"); }, ErrorKind::usage,
                "does not match");
  check_refused([&] { check_basis_geometry(loaded, image, PatchOptions{4, 4, 0, 0, ColourMode::joint}, "x.png", "b.pcsb"); },
                ErrorKind::usage, "does not match");
  // SHA-256 of "abc" (FIPS 180-2, Appendix B.1 test vector).
  CHECK(to_hex(sha256_of("abc")) == "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad");
  // CRC-32 check value of "123456789" (ISO-HDLC / zlib): 0xCBF43926 (common practice, the catalogue's check value).
  CHECK(crc32_of("123456789") == 0xCBF43926u);
}

// Source: issue 5 (the reader treats every file as untrusted). Each damaged file is refused
// with a one-line message before any large allocation.
TEST_CASE("codec: corrupt coded images and basis files are refused") {
  const Image image = codec_scene(40, 32, 3, 8, 3);
  const PatchOptions patch{8, 8, 0, 0, ColourMode::joint};
  const ImageAnalysis a = analysis_for(image, patch);
  CodecSettings s;
  s.k = 16;
  BasisChoice own;
  own.basis = &a.basis;
  const std::string good = encode_image(image, patch, own, s, "x.png").bytes;
  REQUIRE_NOTHROW(decode_coded_image(good, "x.pcsc"));
  const auto refuse = [](const std::string& bytes, const std::string& needle) {
    check_refused([&] { decode_coded_image(bytes, "bad.pcsc"); }, ErrorKind::data, needle);
  };
  refuse(good.substr(0, good.size() - 7), "checksum");
  refuse(good.substr(0, 50), "truncated");
  refuse("", "magic");
  std::string flipped = good;
  flipped[good.size() / 2] ^= 0x10;
  refuse(flipped, "checksum");
  std::string magic = good;
  magic[0] = 'X';
  refuse(magic, "magic");
  std::string version = good;
  version[4] = 9;
  refuse(version, "version 9");
  // A huge declared size with a valid checksum: the caps must catch it, not the CRC.
  const auto resealed = [](std::string bytes) {
    const std::uint32_t crc = crc32_of(std::string_view(bytes).substr(0, bytes.size() - 4));
    std::memcpy(bytes.data() + bytes.size() - 4, &crc, 4);
    return bytes;
  };
  std::string huge = good;
  const std::uint32_t big = 0x7FFFFFFFu;
  std::memcpy(huge.data() + 8, &big, 4);   // width
  std::memcpy(huge.data() + 12, &big, 4);  // height
  refuse(resealed(huge), "above the cap");
  std::string body = good;
  const std::uint64_t body_size = 1ull << 40;
  std::memcpy(body.data() + 84, &body_size, 8);
  refuse(resealed(body), "body");
  std::string coded = good;
  const std::uint32_t many = 100000;
  std::memcpy(coded.data() + 36, &many, 4);  // m
  refuse(resealed(coded), "coded of k");

  // Basis files.
  SavedBasis saved;
  saved.patch = patch;
  saved.channels = 3;
  saved.basis = a.basis;
  const std::string bf = write_basis_file(saved);
  REQUIRE_NOTHROW(read_basis_file(bf, "b.pcsb"));
  const auto refuse_basis = [](const std::string& bytes, const std::string& needle) {
    check_refused([&] { read_basis_file(bytes, "b.pcsb"); }, ErrorKind::data, needle);
  };
  refuse_basis(bf.substr(0, bf.size() - 9), "checksum");
  refuse_basis("PSBF", "truncated");
  std::string bmagic = bf;
  bmagic[1] = 'Q';
  refuse_basis(bmagic, "magic");
  std::string bd = bf;
  const std::uint32_t r_big = 0x40000000u;
  std::memcpy(bd.data() + 20, &r_big, 4);  // r
  refuse_basis(resealed(bd), "impossible");
}
