#include "measure/ssim.hpp"

#include <omp.h>

#include <algorithm>
#include <cmath>
#include <limits>
#include <type_traits>

#include "core/error.hpp"

// Floating-point contraction must stay off in this file (CMakeLists.txt sets
// -ffp-contract=off for it): SSIM(x, x) == 1 exactly relies on the numerator
// and the denominator being rounded alike, which a fused multiply-add formed
// on one side only would break. The filters ask for their fused
// multiply-adds explicitly (madd below).

namespace pcasweep {

std::vector<double> ssim_gaussian_weights() {
  // Sampled Gaussian exp(−i²/(2σ²)), σ = 1.5, i = −5..5, normalised to sum 1
  // (the window of Wang et al. 2004; the same sampling and truncation as
  // scipy.ndimage.gaussian_filter with truncate = 3.5, which rounds
  // 3.5·1.5 + 0.5 down to radius 5).
  const double sigma = 1.5;
  std::vector<double> w(kSsimWindow);
  double sum = 0.0;
  for (int i = -kSsimRadius; i <= kSsimRadius; ++i) {
    w[std::size_t(i + kSsimRadius)] = std::exp(-0.5 * double(i) * double(i) / (sigma * sigma));
    sum += w[std::size_t(i + kSsimRadius)];
  }
  for (double& v : w) v /= sum;
  return w;
}

// The rule behind SsimPrecision::automatic: double precision for every data
// range. Measured (tests/reference/ssim_check.py and docs/quality.md,
// "Precision"): single precision agrees with double and scikit-image to a few
// 1e-8 on the shipped photographs at 8 and 16 bits, but not to 1e-6 on images
// whose column tiles hold two flat levels far apart with a noisy copy (stripes
// of 0.02·L and 0.98·L, 32–64 pixels wide or 20 rows high, copy + 2% noise:
// 1.4e-6 to 4.4e-6 at 8 bits): float rounding of the second moments, there of
// order (L/2)², does not average out over repeated integer patterns. Double
// agrees with scikit-image to 2e-14 everywhere measured. Single is used only
// when asked for.
SsimPrecision ssim_precision_for(SsimPrecision requested, double data_range) {
  (void)data_range;
  if (requested != SsimPrecision::automatic) return requested;
  return SsimPrecision::double_precision;
}

const char* ssim_precision_name(SsimPrecision precision) {
  switch (precision) {
    case SsimPrecision::automatic: return "auto";
    case SsimPrecision::single_precision: return "single";
    case SsimPrecision::double_precision: return "double";
  }
  return "auto";
}

SsimPrecision parse_ssim_precision(const std::string& text) {
  if (text == "auto") return SsimPrecision::automatic;
  if (text == "single") return SsimPrecision::single_precision;
  if (text == "double") return SsimPrecision::double_precision;
  throw usage_error("--ssim-precision: expected auto, single or double, not '" + text + "'");
}

namespace {

// The four filtered moments, in this order in every buffer:
//   A = x − s, D = x − y, Q = (x − y)², P = (x − s)(y − s), s the shift of the tile
constexpr int kMoments = 4;

template <class T>
inline T madd(T a, T b, T c) {
#ifdef __FMA__
  if constexpr (std::is_same_v<T, float>) return __builtin_fmaf(a, b, c);
  else return __builtin_fma(a, b, c);
#else
  return a * b + c;
#endif
}

// out[i] = g5·p[i + 5c] + Σ_{t<5} g_t·(p[i + t·c] + p[i + (10 − t)·c]), i in [0, n):
// the horizontal pass on interleaved data (c samples per pixel), using the
// window's symmetry (g_t = g_{10−t}) to halve the multiplications.
template <class T>
void filter_row(const T* __restrict p, T* __restrict out, int n, int c, const T* g) {
  const T g0 = g[0], g1 = g[1], g2 = g[2], g3 = g[3], g4 = g[4], g5 = g[5];
  const T* __restrict p0 = p;
  const T* __restrict p1 = p + c;
  const T* __restrict p2 = p + 2 * c;
  const T* __restrict p3 = p + 3 * c;
  const T* __restrict p4 = p + 4 * c;
  const T* __restrict p5 = p + 5 * c;
  const T* __restrict p6 = p + 6 * c;
  const T* __restrict p7 = p + 7 * c;
  const T* __restrict p8 = p + 8 * c;
  const T* __restrict p9 = p + 9 * c;
  const T* __restrict p10 = p + 10 * c;
  for (int i = 0; i < n; ++i) {
    T v = g5 * p5[i];
    v = madd(g0, p0[i] + p10[i], v);
    v = madd(g1, p1[i] + p9[i], v);
    v = madd(g2, p2[i] + p8[i], v);
    v = madd(g3, p3[i] + p7[i], v);
    v = madd(g4, p4[i] + p6[i], v);
    out[i] = v;
  }
}

// out[i] = Σ_t g_t·rows[t][i] over 11 rows (the vertical pass), same order of
// operations as filter_row.
template <class T>
void filter_column(const T* const* rows, T* __restrict out, int n, const T* g) {
  const T g0 = g[0], g1 = g[1], g2 = g[2], g3 = g[3], g4 = g[4], g5 = g[5];
  const T* __restrict r0 = rows[0];
  const T* __restrict r1 = rows[1];
  const T* __restrict r2 = rows[2];
  const T* __restrict r3 = rows[3];
  const T* __restrict r4 = rows[4];
  const T* __restrict r5 = rows[5];
  const T* __restrict r6 = rows[6];
  const T* __restrict r7 = rows[7];
  const T* __restrict r8 = rows[8];
  const T* __restrict r9 = rows[9];
  const T* __restrict r10 = rows[10];
  for (int i = 0; i < n; ++i) {
    T v = g5 * r5[i];
    v = madd(g0, r0[i] + r10[i], v);
    v = madd(g1, r1[i] + r9[i], v);
    v = madd(g2, r2[i] + r8[i], v);
    v = madd(g3, r3[i] + r7[i], v);
    v = madd(g4, r4[i] + r6[i], v);
    out[i] = v;
  }
}

// The products of one input row segment: n samples of each image, shifted by
// sh[i] (the same integer for both images; exact: integers below 2^17).
template <class T>
void moments_of_row(const std::uint16_t* __restrict x, const std::uint16_t* __restrict y,
                    const T* __restrict sh, T* __restrict a, T* __restrict d, T* __restrict q, T* __restrict p,
                    int n) {
  for (int i = 0; i < n; ++i) {
    const T xs = T(x[i]) - sh[i];
    const T ys = T(y[i]) - sh[i];
    const T di = xs - ys;  // exact
    a[i] = xs;
    d[i] = di;
    q[i] = di * di;
    p[i] = xs * ys;
  }
}

// The local index from the four window moments (Wang et al. 2004, eq. 13),
// s the shift of the window's samples:
//   μx = A + s, μy = A − D + s,
//   2μxμy + C1 = num1,  μx² + μy² + C1 = num1 + D²,
//   2σxy + C2 = num2 = 2(P − A(A − D)) + C2,  σx² + σy² + C2 = num2 + (Q − D²).
// Identical inputs give D = Q = 0 exactly, so each denominator is its
// numerator and the index is exactly 1.
template <class T>
void local_index(const T* __restrict ma, const T* __restrict md, const T* __restrict mq, const T* __restrict mp,
                 const T* __restrict sh, T* __restrict s, int n, T c1, T c2) {
  for (int i = 0; i < n; ++i) {
    const T a = ma[i];
    const T d = md[i];
    const T b = a - d;
    const T mx = a + sh[i];
    const T my = b + sh[i];
    const T num1 = T(2) * (mx * my) + c1;
    const T den1 = num1 + d * d;
    const T num2 = T(2) * (mp[i] - a * b) + c2;
    const T den2 = num2 + (mq[i] - d * d);
    s[i] = (num1 * num2) / (den1 * den2);
  }
}

// sums[i] += s[i] (double), the column sums of one tile.
template <class T>
void add_to_sums(const T* __restrict s, double* __restrict sums, int n) {
  for (int i = 0; i < n; ++i) sums[i] += double(s[i]);
}

// map[p] = mean over the c channels of s[p·c + ch], p in [0, pixels).
template <class T>
void map_pixels(const T* __restrict s, float* __restrict map, int pixels, int c) {
  if (c == 1) {
    for (int p = 0; p < pixels; ++p) map[p] = float(s[p]);
    return;
  }
  for (int p = 0; p < pixels; ++p) {
    T sum = 0;
    for (int ch = 0; ch < c; ++ch) sum += s[p * c + ch];
    map[p] = float(sum / T(c));  // exactly 1 where every channel is 1
  }
}

class EngineBase {
 public:
  virtual ~EngineBase() = default;
  // Input rows q0 .. q0+rows−1 (rows back to back in x and y). map: when not
  // null, receives map rows max(q0,10)−10 .. q0+rows−11 (width−10 floats each,
  // row 0 of `map` is the first of them).
  virtual void process(const std::uint16_t* x, const std::uint16_t* y, int q0, int rows, float* map,
                       bool parallel) = 0;
  // Σ of the local index over every output pixel so far, per channel.
  virtual std::vector<double> channel_sums() const = 0;
};

// The shift of each column tile (see Engine) is renewed when the mean of the
// window means μx − s over an output row of the tile, in some channel, has
// drifted past kShiftDrift·L; checked every kShiftCheckRows rows, at most once
// per kMinShiftRows rows (renewing filters the 10 rows above again).
constexpr double kShiftDrift = 1.0 / 32.0;
constexpr int kShiftCheckRows = 8;
constexpr int kMinShiftRows = 16;

// The engine. Column tiles of te output samples (whole pixels, ≈ TS) each
// keep a ring of the horizontally filtered moments of their last 11 input
// rows; an output row is the vertical pass over the ring. Samples are shifted
// before any product by an integer close to the local mean (per tile and
// channel: first the rounded mean of the original's samples in the tile's
// input columns of row 5, later renewed as the tile's content drifts, see
// kShiftDrift), so second moments stay small where the image is flat and the
// cancellation in σ = E[·] − μ² costs little. The shifts depend only on the
// samples and their positions, never on how the rows arrive.
template <class T, int TS>
class Engine final : public EngineBase {
 public:
  Engine(int width, int channels, double data_range)
      : w_(width), c_(channels), out_w_(width - 2 * kSsimRadius), data_range_(data_range) {
    n_out_ = out_w_ * c_;
    te_ = std::max(c_, TS - TS % c_);
    n_tiles_ = (n_out_ + te_ - 1) / te_;
    halo_ = 2 * kSsimRadius * c_;
    row_samples_ = std::size_t(w_) * c_;
    const std::vector<double> g = ssim_gaussian_weights();
    for (int i = 0; i < kSsimWindow; ++i) g_[i] = T(g[std::size_t(i)]);
    c1_ = T((0.01 * data_range) * (0.01 * data_range));
    c2_ = T((0.03 * data_range) * (0.03 * data_range));
    ring_.assign(std::size_t(n_tiles_) * kSsimWindow * kMoments * te_, T(0));
    sums_.assign(std::size_t(n_tiles_) * te_, 0.0);
    shifts_.assign(std::size_t(n_tiles_) * 2 * c_, T(0));
    states_.assign(std::size_t(n_tiles_), TileState{});
    kept_x_.assign(std::size_t(2 * kSsimRadius) * row_samples_, 0);
    kept_y_.assign(kept_x_.size(), 0);
  }

  void process(const std::uint16_t* x, const std::uint16_t* y, int q0, int rows, float* map,
               bool parallel) override {
    const Rows in{x, y, q0, this};
    if (parallel && n_tiles_ > 1) {
#pragma omp parallel
      {
        Scratch s(te_, halo_);
#pragma omp for schedule(static)
        for (int t = 0; t < n_tiles_; ++t) tile_rows(t, in, rows, map, s);
      }
    } else {
      Scratch s(te_, halo_);
      for (int t = 0; t < n_tiles_; ++t) tile_rows(t, in, rows, map, s);
    }
    // Keep the last 10 input rows: the next band's first shift block may
    // start within 10 rows of this band's end and filter them again.
    const int keep_from = std::max(q0, q0 + rows - 2 * kSsimRadius);
    for (int q = keep_from; q < q0 + rows; ++q) {
      const std::size_t dst = std::size_t(q % (2 * kSsimRadius)) * row_samples_;
      std::copy_n(x + std::size_t(q - q0) * row_samples_, row_samples_, kept_x_.begin() + dst);
      std::copy_n(y + std::size_t(q - q0) * row_samples_, row_samples_, kept_y_.begin() + dst);
    }
  }

  std::vector<double> channel_sums() const override {
    std::vector<double> out(std::size_t(c_), 0.0);
    for (int t = 0; t < n_tiles_; ++t) {
      const int len = std::min(te_, n_out_ - t * te_);
      const double* s = sums_.data() + std::size_t(t) * te_;
      for (int i = 0; i < len; ++i) out[std::size_t(i % c_)] += s[i];  // te_ is whole pixels
    }
    return out;
  }

 private:
  struct Scratch {
    Scratch(int te, int halo)
        : prod(std::size_t(kMoments) * (te + halo)), vert(std::size_t(kMoments) * te), index(std::size_t(te)),
          shift(std::size_t(te + halo)), pstride(te + halo) {}
    std::vector<T> prod;   // the four products of one input segment (te + 10c each)
    std::vector<T> vert;   // the four window moments of one output segment
    std::vector<T> index;  // local index of one output segment
    std::vector<T> shift;  // the shift of each input sample of the segment
    int pstride;
  };

  // Where input row q is: in the band being added, or among the kept rows.
  struct Rows {
    const std::uint16_t* x;
    const std::uint16_t* y;
    int q0;
    const Engine* e;
    const std::uint16_t* xrow(int q) const {
      return q >= q0 ? x + std::size_t(q - q0) * e->row_samples_
                     : e->kept_x_.data() + std::size_t(q % (2 * kSsimRadius)) * e->row_samples_;
    }
    const std::uint16_t* yrow(int q) const {
      return q >= q0 ? y + std::size_t(q - q0) * e->row_samples_
                     : e->kept_y_.data() + std::size_t(q % (2 * kSsimRadius)) * e->row_samples_;
    }
  };

  // Products and horizontal pass of input row q into its ring slot.
  void filter_input_row(const Rows& in, int q, int e0, int len, T* ring, Scratch& s) const {
    T* pa = s.prod.data();
    T* pd = pa + s.pstride;
    T* pq = pd + s.pstride;
    T* pp = pq + s.pstride;
    moments_of_row<T>(in.xrow(q) + e0, in.yrow(q) + e0, s.shift.data(), pa, pd, pq, pp, len + halo_);
    T* slot = ring + std::size_t(q % kSsimWindow) * kMoments * te_;
    filter_row<T>(pa, slot, len, c_, g_);
    filter_row<T>(pd, slot + te_, len, c_, g_);
    filter_row<T>(pq, slot + 2 * te_, len, c_, g_);
    filter_row<T>(pp, slot + 3 * te_, len, c_, g_);
  }

  void load_shift(const T* shift, int len_in, Scratch& s) const {
    for (int i = 0; i < len_in; ++i) s.shift[std::size_t(i)] = shift[i % c_];
  }

  void tile_rows(int t, const Rows& in, int rows, float* map, Scratch& s) {
    const int e0 = t * te_;
    const int len = std::min(te_, n_out_ - e0);
    const int len_in = len + halo_;
    T* ring = ring_.data() + std::size_t(t) * kSsimWindow * kMoments * te_;
    double* sums = sums_.data() + std::size_t(t) * te_;
    TileState& state = states_[std::size_t(t)];
    T* shift = shifts_.data() + std::size_t(t) * 2 * c_;
    T* next_shift = shift + c_;
    const int q0 = in.q0;
    const int first_map_row = std::max(q0, 2 * kSsimRadius) - 2 * kSsimRadius;
    T* va = s.vert.data();
    T* vd = va + te_;
    T* vq = vd + te_;
    T* vp = vq + te_;
    bool shift_loaded = false;
    for (int q = q0; q < q0 + rows; ++q) {
      if (q < 2 * kSsimRadius) continue;  // filtered when row 10 arrives
      const int out_row = q - 2 * kSsimRadius;
      if (out_row == 0 || state.renew) {
        if (out_row == 0) {
          // First shift: the rounded mean per channel of the original's row 5.
          const std::uint16_t* mid = in.xrow(kSsimRadius) + e0;
          for (int ch = 0; ch < c_; ++ch) {
            std::uint64_t sum = 0;
            int count = 0;
            for (int i = ch; i < len_in; i += c_) sum += mid[i], ++count;
            shift[ch] = T(std::floor(double(sum) / count + 0.5));
          }
        } else {
          std::copy(next_shift, next_shift + c_, shift);
        }
        state.renew = false;
        state.block_start = out_row;
        load_shift(shift, len_in, s);
        shift_loaded = true;
        // The 10 rows above q again, under the new shift.
        for (int r = out_row; r < q; ++r) filter_input_row(in, r, e0, len, ring, s);
      } else if (!shift_loaded) {
        load_shift(shift, len_in, s);
        shift_loaded = true;
      }
      filter_input_row(in, q, e0, len, ring, s);
      const T* r[kMoments][kSsimWindow];
      for (int k = 0; k < kSsimWindow; ++k) {
        const T* base = ring + std::size_t((out_row + k) % kSsimWindow) * kMoments * te_;
        for (int m = 0; m < kMoments; ++m) r[m][k] = base + m * te_;
      }
      filter_column<T>(r[0], va, len, g_);
      filter_column<T>(r[1], vd, len, g_);
      filter_column<T>(r[2], vq, len, g_);
      filter_column<T>(r[3], vp, len, g_);
      // Output sample i of the tile has the channel (and shift) of input sample i.
      local_index<T>(va, vd, vq, vp, s.shift.data(), s.index.data(), len, c1_, c2_);
      add_to_sums<T>(s.index.data(), sums, len);
      if (map) {
        const int map_row = out_row - first_map_row;
        map_pixels<T>(s.index.data(), map + std::size_t(map_row) * out_w_ + e0 / c_, len / c_, c_);
      }
      if (out_row % kShiftCheckRows == kShiftCheckRows - 1 && out_row + 1 - state.block_start >= kMinShiftRows) {
        // Has the tile's mean drifted from the shift? va holds μx − s.
        bool drifted = false;
        for (int ch = 0; ch < c_; ++ch) {
          double sum = 0.0;
          for (int i = ch; i < len; i += c_) sum += double(va[i]);
          const double mean = sum / double(len / c_);
          next_shift[ch] = T(std::clamp(std::floor(double(shift[ch]) + mean + 0.5), 0.0, data_range_));
          drifted = drifted || std::abs(mean) > kShiftDrift * data_range_;
        }
        state.renew = drifted;
      }
    }
  }

  int w_, c_, out_w_;
  double data_range_;
  int n_out_ = 0, te_ = 0, n_tiles_ = 0, halo_ = 0;
  std::size_t row_samples_ = 0;
  T g_[kSsimWindow];
  T c1_, c2_;
  std::vector<T> ring_;        // per tile: 11 slots (input row mod 11) × 4 moments × te_
  std::vector<double> sums_;   // per tile: te_ column sums of the local index
  struct TileState {
    int block_start = 0;  // output row where the current shift began
    bool renew = false;   // the next output row starts a new shift
  };
  std::vector<TileState> states_;
  std::vector<T> shifts_;      // per tile: the shift per channel, then the next one
  std::vector<std::uint16_t> kept_x_, kept_y_;  // the last 10 input rows (row q at q mod 10)
};

// Column tile widths in samples; a tile's ring (11 rows × 4 moments) is
// 22 KiB in float, 45 KiB in double; 128 was the fastest width measured
// for both (docs/performance.md, "SSIM cost" and "Figures once quoted in headers").
constexpr int kTileFloat = 128;
constexpr int kTileDouble = 128;

// Input rows per parallel step: bounds the map buffer and the delay before
// on_map_row sees a row.
constexpr int kChunkRows = 128;
// Below this many output samples per step a band runs on one thread.
constexpr std::size_t kParallelSamples = 32768;

}  // namespace

struct SsimAccumulator::Impl {
  int width = 0, height = 0, channels = 0;
  double data_range = 0.0;
  SsimPrecision precision = SsimPrecision::double_precision;
  std::function<void(int, const float*)> on_map_row;
  int rows = 0;
  bool valid = false;  // at least 11×11
  std::unique_ptr<EngineBase> engine;
  std::vector<float> map_buffer;
};

SsimAccumulator::SsimAccumulator(int width, int height, int channels, double data_range, SsimPrecision precision,
                                 std::function<void(int row, const float* values)> on_map_row)
    : impl_(std::make_unique<Impl>()) {
  if (width < 1 || height < 1) throw usage_error("SSIM: image size must be at least 1x1");
  if (channels < 1) throw usage_error("SSIM: channel count must be at least 1");
  if (!(data_range > 0.0) || !std::isfinite(data_range)) throw usage_error("SSIM: data range must be positive");
  Impl& m = *impl_;
  m.width = width;
  m.height = height;
  m.channels = channels;
  m.data_range = data_range;
  m.precision = ssim_precision_for(precision, data_range);
  m.on_map_row = std::move(on_map_row);
  m.valid = width >= kSsimWindow && height >= kSsimWindow;
  if (!m.valid) return;
  if (m.precision == SsimPrecision::single_precision)
    m.engine = std::make_unique<Engine<float, kTileFloat>>(width, channels, data_range);
  else
    m.engine = std::make_unique<Engine<double, kTileDouble>>(width, channels, data_range);
}

SsimAccumulator::~SsimAccumulator() = default;
SsimAccumulator::SsimAccumulator(SsimAccumulator&&) noexcept = default;
SsimAccumulator& SsimAccumulator::operator=(SsimAccumulator&&) noexcept = default;

void SsimAccumulator::add_rows(const std::uint16_t* original, const std::uint16_t* other, int rows) {
  Impl& m = *impl_;
  if (rows < 0) throw usage_error("SSIM: negative row count");
  if (rows == 0) return;
  if (!original || !other) throw usage_error("SSIM: add_rows given no samples");
  if (rows > m.height - m.rows) {
    throw usage_error("SSIM: " + std::to_string(rows) + " rows given after " + std::to_string(m.rows) + " of " +
                      std::to_string(m.height) + ": past the last row");
  }
  if (!m.valid) {
    m.rows += rows;
    return;
  }
  const std::size_t row_samples = std::size_t(m.width) * m.channels;
  const int out_w = m.width - 2 * kSsimRadius;
  const bool serial_context = omp_in_parallel() != 0 || omp_get_max_threads() < 2;
  for (int done = 0; done < rows;) {
    const int n = std::min(kChunkRows, rows - done);
    const int q0 = m.rows;
    const int map_first = std::max(q0, 2 * kSsimRadius) - 2 * kSsimRadius;
    const int map_end = std::max(q0 + n, 2 * kSsimRadius) - 2 * kSsimRadius;  // exclusive
    float* map = nullptr;
    if (m.on_map_row && map_end > map_first) {
      m.map_buffer.resize(std::size_t(std::min(kChunkRows, m.height)) * out_w);
      map = m.map_buffer.data();
    }
    const bool parallel = !serial_context && std::size_t(n) * std::size_t(out_w) * m.channels >= kParallelSamples;
    m.engine->process(original + done * row_samples, other + done * row_samples, q0, n, map, parallel);
    m.rows += n;
    done += n;
    if (map)
      for (int r = map_first; r < map_end; ++r) m.on_map_row(r, map + std::size_t(r - map_first) * out_w);
  }
}

SsimResult SsimAccumulator::result() const {
  const Impl& m = *impl_;
  if (m.rows < m.height) {
    throw usage_error("SSIM: result asked after " + std::to_string(m.rows) + " of " + std::to_string(m.height) +
                      " rows");
  }
  SsimResult r;
  r.precision = m.precision;
  if (!m.valid) {
    r.channel_ssim.assign(std::size_t(m.channels), std::numeric_limits<double>::quiet_NaN());
    r.ssim = std::numeric_limits<double>::quiet_NaN();
    return r;
  }
  const double area = double(m.width - 2 * kSsimRadius) * double(m.height - 2 * kSsimRadius);
  const std::vector<double> sums = m.engine->channel_sums();
  double total = 0.0;
  for (double s : sums) {
    r.channel_ssim.push_back(s / area);
    total += s / area;
  }
  r.ssim = total / double(m.channels);
  return r;
}

SsimPrecision SsimAccumulator::precision() const { return impl_->precision; }
int SsimAccumulator::rows_added() const { return impl_->rows; }
int SsimAccumulator::width() const { return impl_->width; }
int SsimAccumulator::height() const { return impl_->height; }
int SsimAccumulator::channels() const { return impl_->channels; }

double ssim_channel(const std::uint16_t* a, const std::uint16_t* b, int width, int height, int stride,
                    double data_range, std::vector<float>* map, SsimPrecision precision) {
  if (stride < 1) throw usage_error("SSIM: stride must be at least 1");
  const int out_w = width - 2 * kSsimRadius;
  if (map) map->clear();
  std::function<void(int, const float*)> on_row;
  if (map && width >= kSsimWindow && height >= kSsimWindow) {
    map->assign(std::size_t(out_w) * (height - 2 * kSsimRadius), 0.0f);
    on_row = [map, out_w](int row, const float* values) {
      std::copy(values, values + out_w, map->data() + std::size_t(row) * out_w);
    };
  }
  SsimAccumulator acc(width, height, 1, data_range, precision, std::move(on_row));
  if (stride == 1) {
    acc.add_rows(a, b, height);
  } else {
    // Gather the channel a band at a time (bounded memory), then feed it.
    const int band = std::min(height, kChunkRows);
    std::vector<std::uint16_t> ba(std::size_t(band) * width), bb(ba.size());
    for (int y0 = 0; y0 < height; y0 += band) {
      const int n = std::min(band, height - y0);
      for (int r = 0; r < n; ++r) {
        const std::size_t base = std::size_t(y0 + r) * width * stride;
        for (int x = 0; x < width; ++x) {
          ba[std::size_t(r) * width + x] = a[base + std::size_t(x) * stride];
          bb[std::size_t(r) * width + x] = b[base + std::size_t(x) * stride];
        }
      }
      acc.add_rows(ba.data(), bb.data(), n);
    }
  }
  return acc.result().ssim;
}

namespace {
void check_pair(const Image& a, const Image& b) {
  if (a.width != b.width || a.height != b.height || a.channels != b.channels || a.bit_depth != b.bit_depth) {
    throw usage_error("cannot compute SSIM of images of different size, channels or bit depth");
  }
  if (a.samples.size() != std::size_t(a.width) * a.height * a.channels || b.samples.size() != a.samples.size())
    throw usage_error("cannot compute SSIM of an image whose samples do not fill its size");
}
}  // namespace

SsimResult compute_ssim(const Image& original, const Image& other, bool want_map, SsimPrecision precision) {
  check_pair(original, other);
  SsimResult map_holder;
  std::function<void(int, const float*)> on_row;
  const int out_w = original.width - 2 * kSsimRadius, out_h = original.height - 2 * kSsimRadius;
  if (want_map && out_w > 0 && out_h > 0) {
    map_holder.map.assign(std::size_t(out_w) * out_h, 0.0f);
    map_holder.map_width = out_w;
    map_holder.map_height = out_h;
    on_row = [&map_holder, out_w](int row, const float* values) {
      std::copy(values, values + out_w, map_holder.map.data() + std::size_t(row) * out_w);
    };
  }
  SsimAccumulator acc(original.width, original.height, original.channels, original.max_value(), precision,
                      std::move(on_row));
  acc.add_rows(original.samples.data(), other.samples.data(), original.height);
  SsimResult r = acc.result();
  r.map = std::move(map_holder.map);
  r.map_width = map_holder.map_width;
  r.map_height = map_holder.map_height;
  return r;
}

Image ssim_map_image(const SsimResult& result) {
  if (result.map.empty()) throw usage_error("no SSIM map was computed (the image is under 11x11 or none was asked)");
  Image img;
  img.width = result.map_width;
  img.height = result.map_height;
  img.channels = 1;
  img.bit_depth = 8;
  img.channel_names = {"gray"};
  img.samples.resize(result.map.size());
  for (std::size_t i = 0; i < result.map.size(); ++i) {
    const double v = std::clamp(double(result.map[i]), 0.0, 1.0);
    img.samples[i] = std::uint16_t(std::lround(v * 255.0));
  }
  return img;
}

SsimResult compute_ssim_sets(const std::vector<Image>& originals, const std::vector<Image>& others,
                             SsimPrecision precision) {
  if (originals.empty() || originals.size() != others.size()) {
    throw usage_error("cannot compute SSIM of image sets of different lengths");
  }
  if (originals.size() == 1) return compute_ssim(originals.front(), others.front(), false, precision);
  const int c = originals.front().channels;
  std::vector<double> weighted(std::size_t(c), 0.0);
  double area = 0.0;
  SsimPrecision used = ssim_precision_for(precision, originals.front().max_value());
  for (std::size_t i = 0; i < originals.size(); ++i) {
    if (originals[i].channels != c) throw usage_error("cannot compute SSIM of image sets with different channels");
    const SsimResult one = compute_ssim(originals[i], others[i], false, precision);
    used = one.precision;
    if (std::isnan(one.ssim)) continue;
    const double w = double(originals[i].width - 2 * kSsimRadius) * double(originals[i].height - 2 * kSsimRadius);
    for (int ch = 0; ch < c; ++ch) weighted[std::size_t(ch)] += w * one.channel_ssim[std::size_t(ch)];
    area += w;
  }
  SsimResult r;
  r.precision = used;
  double sum = 0.0;
  for (int ch = 0; ch < c; ++ch) {
    const double v = area > 0 ? weighted[std::size_t(ch)] / area : std::numeric_limits<double>::quiet_NaN();
    r.channel_ssim.push_back(v);
    sum += v;
  }
  r.ssim = sum / double(c);
  return r;
}

}  // namespace pcasweep
