#include "measure/image_metrics.hpp"

#include <omp.h>

#include <algorithm>
#include <cmath>
#include <limits>

#include "core/error.hpp"

namespace pcasweep {

double psnr_from_mse(double mse, double data_range) {
  if (mse <= 0.0) return std::numeric_limits<double>::infinity();
  return 10.0 * std::log10(data_range * data_range / mse);
}

namespace {

using Wide = QualityAccumulator::Wide;

// Integer sums of one run of samples, per lane (lane j holds channel j mod c).
struct LaneSums {
  explicit LaneSums(int lanes) : squared(lanes, 0), sum(lanes, 0), sum_squares(lanes, 0) {}
  std::vector<Wide> squared;       // Σ(x − x̂)²
  std::vector<std::uint64_t> sum;  // Σx (below 2^16 per sample: no overflow under 2^48 samples)
  std::vector<Wide> sum_squares;   // Σx²
  std::uint32_t max_abs = 0;
};

// Samples per inner block, before rounding down to whole groups of lanes: each
// 64-bit lane adds at most kBlock/A values below 2^32, far from overflowing,
// before the block is moved to 128 bits.
constexpr std::size_t kBlock = std::size_t(1) << 20;

// Sums n samples (n a multiple of A) into lanes[0..A). A is a multiple of the
// channel count, so every lane sees one channel. Written for the vectoriser:
// fixed-size lane arrays, unsigned arithmetic, no branches.
template <int A>
void sum_lanes(const std::uint16_t* __restrict x, const std::uint16_t* __restrict y, std::size_t n, LaneSums& out) {
  // Blocks of whole lane groups: a block that ended inside a group would read
  // past its end and start the next block with every lane on another channel.
  constexpr std::size_t block = kBlock - kBlock % std::size_t(A);
  for (std::size_t start = 0; start < n; start += block) {
    const std::size_t end = std::min(n, start + block);
    std::uint64_t sq[A] = {}, sx[A] = {}, sxx[A] = {};
    std::uint32_t mx[A] = {};
    for (std::size_t k = start; k < end; k += A) {
      for (int j = 0; j < A; ++j) {
        const std::uint32_t a = x[k + j], b = y[k + j];
        const std::uint32_t e = a > b ? a - b : b - a;
        sq[j] += std::uint64_t(e * e);  // e·e < 2^32
        sx[j] += a;
        sxx[j] += std::uint64_t(a * a);
        mx[j] = std::max(mx[j], e);
      }
    }
    for (int j = 0; j < A; ++j) {
      out.squared[std::size_t(j)] += sq[j];
      out.sum[std::size_t(j)] += sx[j];
      out.sum_squares[std::size_t(j)] += sxx[j];
      out.max_abs = std::max(out.max_abs, mx[j]);
    }
  }
}

// Lanes for c channels: a multiple of c with enough independent lanes for the
// vector units; 0 means "no specialised kernel" (plain loop).
int lanes_for(int c) {
  switch (c) {
    case 1: case 2: case 4: return 16;
    case 3: return 12;
    default: return 0;
  }
}

// Sums samples [0, n) into `out` (lanes as lanes_for(c), or c lanes).
void sum_run(const std::uint16_t* x, const std::uint16_t* y, std::size_t n, int c, LaneSums& out) {
  const int a = lanes_for(c);
  std::size_t done = 0;
  if (a == 16) {
    done = n - n % 16;
    sum_lanes<16>(x, y, done, out);
  } else if (a == 12) {
    done = n - n % 12;
    sum_lanes<12>(x, y, done, out);
  }
  // The rest (or every sample for other channel counts): lane = channel.
  for (std::size_t i = done; i < n; ++i) {
    const std::uint32_t va = x[i], vb = y[i];
    const std::uint32_t e = va > vb ? va - vb : vb - va;
    const std::size_t lane = (i - done) % std::size_t(c);  // done is a multiple of c
    out.squared[lane] += std::uint64_t(e * e);
    out.sum[lane] += va;
    out.sum_squares[lane] += std::uint64_t(va * va);
    out.max_abs = std::max(out.max_abs, e);
  }
}

double centred_squares(const QualityAccumulator::OriginalSums& s, std::size_t ch) {
  // Σ(x − x̄)² = (n·Σx² − (Σx)²)/n, the numerator an exact integer.
  const Wide n = s.pixels;
  const Wide num = n * s.sum_squares[ch] - Wide(s.sum[ch]) * Wide(s.sum[ch]);
  return double(num) / double(s.pixels);
}

}  // namespace

bool QualityAccumulator::OriginalSums::operator<(const OriginalSums& o) const {
  if (pixels != o.pixels) return pixels < o.pixels;
  if (sum != o.sum) return sum < o.sum;
  return sum_squares < o.sum_squares;
}

QualityAccumulator::QualityAccumulator(int channels, int bit_depth) : channels_(channels), bit_depth_(bit_depth) {
  if (channels < 1) throw usage_error("quality: channel count must be at least 1");
  if (bit_depth != 8 && bit_depth != 16) throw usage_error("quality: bit depth must be 8 or 16");
  squared_.assign(std::size_t(channels), 0);
  own_.sum.assign(std::size_t(channels), 0);
  own_.sum_squares.assign(std::size_t(channels), 0);
}

void QualityAccumulator::add(const std::uint16_t* original, const std::uint16_t* written, std::size_t samples) {
  if (samples == 0) return;
  if (!original || !written) throw usage_error("quality: add given no samples");
  const std::size_t c = std::size_t(channels_);
  if (samples % c != 0) {
    throw usage_error("quality: " + std::to_string(samples) + " samples is not a whole number of " +
                      std::to_string(channels_) + "-channel pixels");
  }
  const int lanes = lanes_for(channels_) ? lanes_for(channels_) : channels_;
  const auto fold = [&](const LaneSums& s) {
    for (int j = 0; j < lanes; ++j) {
      const std::size_t ch = std::size_t(j) % c;
      squared_[ch] += s.squared[std::size_t(j)];
      own_.sum[ch] += s.sum[std::size_t(j)];
      own_.sum_squares[ch] += s.sum_squares[std::size_t(j)];
    }
    max_abs_ = std::max(max_abs_, s.max_abs);
  };
  const int threads = omp_in_parallel() ? 1 : omp_get_max_threads();
  const std::size_t per_thread = std::size_t(1) << 19;  // below this, one thread is faster
  if (threads > 1 && samples >= 2 * per_thread) {
    // Split at multiples of the lane count so each part's lanes keep their
    // channels; integer sums, so the split does not change the result.
    const std::size_t unit = std::size_t(lanes);
#pragma omp parallel
    {
      const std::size_t t = std::size_t(omp_get_thread_num()), nt = std::size_t(omp_get_num_threads());
      const std::size_t units = samples / unit;
      const std::size_t u0 = units * t / nt, u1 = units * (t + 1) / nt;
      const std::size_t begin = u0 * unit, end = t + 1 == nt ? samples : u1 * unit;
      LaneSums part(lanes);
      sum_run(original + begin, written + begin, end - begin, channels_, part);
#pragma omp critical(pcasweep_quality_fold)
      fold(part);
    }
  } else {
    LaneSums part(lanes);
    sum_run(original, written, samples, channels_, part);
    fold(part);
  }
  own_.pixels += samples / c;
}

void QualityAccumulator::merge(const QualityAccumulator& other) {
  if (&other == this) {
    const QualityAccumulator copy = other;
    merge(copy);
    return;
  }
  if (other.channels_ != channels_ || other.bit_depth_ != bit_depth_)
    throw usage_error("quality: cannot pool images of different channels or bit depth");
  for (std::size_t ch = 0; ch < squared_.size(); ++ch) squared_[ch] += other.squared_[ch];
  max_abs_ = std::max(max_abs_, other.max_abs_);
  if (other.own_.pixels > 0) merged_.push_back(other.own_);
  for (const OriginalSums& s : other.merged_) merged_.push_back(s);
}

std::uint64_t QualityAccumulator::pixels() const {
  std::uint64_t n = own_.pixels;
  for (const OriginalSums& s : merged_) n += s.pixels;
  return n;
}

ImageQuality QualityAccumulator::result() const {
  const double data_range = bit_depth_ == 16 ? 65535.0 : 255.0;
  const std::uint64_t n = pixels();
  // Each image's centred sum, added in a canonical order (not merge order).
  std::vector<const OriginalSums*> parts;
  if (own_.pixels > 0) parts.push_back(&own_);
  for (const OriginalSums& s : merged_) parts.push_back(&s);
  std::sort(parts.begin(), parts.end(), [](const OriginalSums* a, const OriginalSums* b) { return *a < *b; });
  ImageQuality q;
  Wide total_sq = 0;
  double total_centred = 0.0;
  for (std::size_t ch = 0; ch < squared_.size(); ++ch) {
    const double m = n ? double(squared_[ch]) / double(n) : 0.0;
    q.channel_mse.push_back(m);
    q.channel_psnr_db.push_back(psnr_from_mse(m, data_range));
    total_sq += squared_[ch];
  }
  for (const OriginalSums* s : parts)
    for (std::size_t ch = 0; ch < squared_.size(); ++ch) total_centred += centred_squares(*s, ch);
  const double count = double(n) * double(channels_);
  const double sq = double(total_sq);
  q.mse = count > 0 ? sq / count : 0.0;
  q.rmse = std::sqrt(q.mse);
  q.psnr_db = psnr_from_mse(q.mse, data_range);
  q.max_abs_error = double(max_abs_);
  q.relative_error = total_centred > 0.0 ? std::sqrt(sq / total_centred) : (total_sq > 0 ? 1.0 : 0.0);
  return q;
}

namespace {
void check_pair(const Image& a, const Image& b) {
  if (a.width != b.width || a.height != b.height || a.channels != b.channels || a.bit_depth != b.bit_depth) {
    throw usage_error("cannot compare images of different size, channels or bit depth");
  }
  if (a.samples.size() != std::size_t(a.width) * a.height * a.channels || b.samples.size() != a.samples.size())
    throw usage_error("cannot compare an image whose samples do not fill its size");
}
}  // namespace

ImageQuality compare_images(const Image& a, const Image& b) {
  check_pair(a, b);
  QualityAccumulator acc(a.channels, a.bit_depth);
  acc.add(a.samples.data(), b.samples.data(), a.samples.size());
  return acc.result();
}

ImageQuality compare_image_sets(const std::vector<Image>& originals, const std::vector<Image>& reconstructions) {
  if (originals.empty() || originals.size() != reconstructions.size()) {
    throw usage_error("cannot compare image sets of different lengths");
  }
  QualityAccumulator total(originals.front().channels, originals.front().bit_depth);
  for (std::size_t i = 0; i < originals.size(); ++i) {
    check_pair(originals[i], reconstructions[i]);
    if (originals[i].channels != total.channels() || originals[i].bit_depth != total.bit_depth())
      throw usage_error("cannot compare image sets with different channels or bit depth");
    QualityAccumulator one(originals[i].channels, originals[i].bit_depth);
    one.add(originals[i].samples.data(), reconstructions[i].samples.data(), originals[i].samples.size());
    total.merge(one);
  }
  return total.result();
}

}  // namespace pcasweep
