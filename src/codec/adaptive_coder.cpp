#include "codec/adaptive_coder.hpp"

#include <algorithm>
#include <array>
#include <bit>

#include "core/error.hpp"

namespace pcasweep {

namespace {

// One binary decision's adaptive probability that the bit is 0, 16-bit fixed point.
// Two estimators, shifts up to 3 (fast) and 7 (slow), averaged; while few bits have
// been seen both use shift seen+1, so the first bits move the estimate quickly
// (warm-up). Limits 3/7 were the best of 2..5 / 5..8 on harbour and mast_nir at
// Q60 (docs/codec.md).
struct BitModel {
  std::uint16_t fast = 32768, slow = 32768;
  std::uint8_t seen = 0;
  std::uint32_t p0() const { return std::clamp<std::uint32_t>((std::uint32_t(fast) + slow) >> 1, 64, 65536 - 64); }
  void update(int bit) {
    const int sf = std::min<int>(seen + 1, 3), ss = std::min<int>(seen + 1, 7);
    if (seen < 255) ++seen;
    if (bit) {
      fast = std::uint16_t(fast - (fast >> sf));
      slow = std::uint16_t(slow - (slow >> ss));
    } else {
      fast = std::uint16_t(fast + ((65536u - fast) >> sf));
      slow = std::uint16_t(slow + ((65536u - slow) >> ss));
    }
  }
};

class Encoder {
 public:
  int bit(BitModel& m, int b) {
    const std::uint32_t bound = (range_ >> 16) * m.p0();
    if (!b) {
      range_ = bound;
    } else {
      low_ += bound;
      range_ -= bound;
    }
    m.update(b);
    while (range_ < (1u << 24)) {
      range_ <<= 8;
      shift_low();
    }
    return b;
  }
  std::string finish() {
    for (int i = 0; i < 5; ++i) shift_low();
    return std::move(out_);
  }

 private:
  void shift_low() {
    if (std::uint32_t(low_) < 0xFF000000u || (low_ >> 32) != 0) {
      const std::uint8_t carry = std::uint8_t(low_ >> 32);
      std::uint8_t temp = cache_;
      do {
        out_.push_back(char(std::uint8_t(temp + carry)));
        temp = 0xFF;
      } while (--cache_size_ != 0);
      cache_ = std::uint8_t(low_ >> 24);
    }
    ++cache_size_;
    low_ = (low_ & 0x00FFFFFFu) << 8;
  }
  std::uint64_t low_ = 0;
  std::uint32_t range_ = 0xFFFFFFFFu;
  std::uint8_t cache_ = 0;
  std::uint64_t cache_size_ = 1;
  std::string out_;
};

class Decoder {
 public:
  Decoder(std::string_view bytes, const std::string& name) : bytes_(bytes), name_(name) {
    if (bytes.size() < 5 || bytes[0] != 0) throw data_error(name + ": range-coded data is malformed (bad start)");
    pos_ = 1;
    for (int i = 0; i < 4; ++i) code_ = (code_ << 8) | next();
  }
  int bit(BitModel& m, int /*unused*/) {
    const std::uint32_t bound = (range_ >> 16) * m.p0();
    int b;
    if (code_ < bound) {
      range_ = bound;
      b = 0;
    } else {
      code_ -= bound;
      range_ -= bound;
      b = 1;
    }
    m.update(b);
    while (range_ < (1u << 24)) {
      range_ <<= 8;
      code_ = (code_ << 8) | next();
    }
    return b;
  }
  // The encoder's flush leaves the decoder exactly at the end with code 0.
  void finish() const {
    if (pos_ > bytes_.size()) throw data_error(name_ + ": range-coded data ends early (truncated)");
    if (pos_ != bytes_.size()) throw data_error(name_ + ": range-coded data has trailing bytes");
    if (code_ != 0) throw data_error(name_ + ": range-coded data is corrupt (bad final state)");
  }

 private:
  std::uint32_t next() {
    if (pos_ >= bytes_.size()) {
      // Reading past the end: count it (finish() refuses), but cap the count so a
      // corrupt stream cannot run on for long.
      if (++pos_ > bytes_.size() + 64) throw data_error(name_ + ": range-coded data ends early (truncated)");
      return 0;
    }
    return std::uint8_t(bytes_[pos_++]);
  }
  std::string_view bytes_;
  const std::string& name_;
  std::size_t pos_ = 0;
  std::uint32_t range_ = 0xFFFFFFFFu, code_ = 0;
};

// 0, 1 → themselves; a ≥ 2 → 2·floor(log2 a) + (second-highest bit), capped.
int log_bucket(std::uint64_t a, int cap) {
  if (a < 2) return int(a);
  const int e = 63 - std::countl_zero(a);
  return std::min(cap, 2 * e + int((a >> (e - 1)) & 1));
}

int band_of(std::size_t j) { return j == 0 ? 0 : j < 4 ? 1 : j < 16 ? 2 : j < 64 ? 3 : 4; }

constexpr int kBands = 5, kScales = 14, kActs = 16, kExpCtx = 16, kMaxExp = 32;

struct Models {
  std::vector<BitModel> zero = std::vector<BitModel>(kBands * kScales * kActs);
  std::vector<BitModel> sign = std::vector<BitModel>(kBands * 9);
  std::vector<BitModel> expo = std::vector<BitModel>(kScales * (kActs / 2) * kExpCtx);
  std::vector<BitModel> mant_hi = std::vector<BitModel>(kMaxExp * kScales);
  std::vector<BitModel> mant = std::vector<BitModel>(kMaxExp * kMaxExp);
};

struct Context {
  int band, scale, act, sign_ctx;
};

// Codes (Encoder) or decodes (Decoder) one integer; `v` is ignored when decoding.
template <class RC>
std::int32_t code_value(RC& rc, Models& M, const Context& c, std::int32_t v, const std::string& name) {
  const int nonzero = rc.bit(M.zero[(c.band * kScales + c.scale) * kActs + c.act], v != 0);
  if (!nonzero) return 0;
  const int negative = rc.bit(M.sign[c.band * 9 + c.sign_ctx], v < 0);
  // |v| as unsigned (|INT32_MIN| = 2^31 fits).
  const std::uint32_t a = v < 0 ? std::uint32_t(0) - std::uint32_t(v) : std::uint32_t(v);
  const int e_true = a ? 31 - std::countl_zero(a) : 0;
  int e = 0;
  BitModel* ex = &M.expo[(c.scale * (kActs / 2) + c.act / 2) * kExpCtx];
  while (e < 31 && rc.bit(ex[std::min(e, kExpCtx - 1)], e < e_true)) ++e;
  std::uint32_t mag = 1;
  for (int p = e - 1; p >= 0; --p) {
    BitModel& m = p == e - 1 ? M.mant_hi[e * kScales + c.scale] : M.mant[e * kMaxExp + p];
    mag = (mag << 1) | std::uint32_t(rc.bit(m, int((a >> p) & 1)));
  }
  // An encoder never writes |v| above 2^31 (negative) or 2^31 − 1 (positive); a damaged stream can.
  if (mag > (negative ? 0x80000000u : 0x7FFFFFFFu)) {
    throw data_error(name + ": range-coded data is corrupt (value out of range)");
  }
  return negative ? std::int32_t(std::uint32_t(0) - mag) : std::int32_t(mag);  // modular, defined since C++20
}

int sign3(std::int32_t v) { return v > 0 ? 1 : v < 0 ? 2 : 0; }
std::uint64_t mag(std::int32_t v) { return std::min<std::uint64_t>(v < 0 ? 0ull - std::uint64_t(std::int64_t(v)) : std::uint64_t(v), 1u << 20); }

template <class RC>
void code_all(RC& rc, std::vector<std::int32_t>& q, std::size_t m, const CoefficientGrid& g, CodingOrder order,
              const std::string& name) {
  const std::size_t n = g.observations(), per_plane = g.patches_across * g.patches_down;
  Models M;
  std::vector<std::uint64_t> sum(m, 0), count(m, 0);
  auto one = [&](std::size_t i, std::size_t j) {
    const std::int32_t* col = q.data() + j * n;
    const std::size_t patch = i % per_plane, px = patch % g.patches_across, py = patch / g.patches_across;
    const std::int32_t L = px > 0 ? col[i - 1] : 0, U = py > 0 ? col[i - g.patches_across] : 0;
    std::uint64_t act = 2 * mag(L) + 2 * mag(U);
    if (j >= 1) act += mag(q[(j - 1) * n + i]);
    if (j >= 2) act += mag(q[(j - 2) * n + i]);
    if (i >= per_plane) act += 2 * mag(col[i - per_plane]);
    Context c;
    c.band = band_of(j);
    c.act = log_bucket(act, kActs - 1);
    c.scale = log_bucket(16 * sum[j] / (count[j] + 1), kScales - 1);
    c.sign_ctx = sign3(L) * 3 + sign3(U);
    const std::int32_t v = code_value(rc, M, c, q[j * n + i], name);
    q[j * n + i] = v;
    sum[j] += mag(v);
    ++count[j];
  };
  if (order == CodingOrder::component_major) {
    for (std::size_t j = 0; j < m; ++j)
      for (std::size_t i = 0; i < n; ++i) one(i, j);
  } else {
    for (std::size_t i = 0; i < n; ++i)
      for (std::size_t j = 0; j < m; ++j) one(i, j);
  }
}

// Patch-row coding (the file's order): the contexts of code_all() from the
// current row (planes × nx × m) and the previous one.
struct RowContext {
  std::size_t m, nx, ny, planes;
  std::vector<std::int32_t> previous, current;  // planes × nx × m
  std::vector<std::uint64_t> sum, count;        // per component, as in code_all()
  std::size_t row = 0;                          // patch rows done
  Models models;
  RowContext(std::size_t m_, const CoefficientGrid& g)
      : m(m_), nx(g.patches_across), ny(g.patches_down), planes(g.planes),
        previous(g.planes * g.patches_across * m_, 0), current(previous.size(), 0), sum(m_, 0), count(m_, 0) {}
};

template <class RC>
void code_row(RC& rc, RowContext& s, const std::string& name) {
  if (s.row >= s.ny) throw usage_error("internal: more patch rows coded than the image has");
  const std::size_t m = s.m, nx = s.nx;
  for (std::size_t p = 0; p < s.planes; ++p) {
    std::int32_t* cur = s.current.data() + p * nx * m;
    const std::int32_t* up = s.previous.data() + p * nx * m;
    const std::int32_t* below_plane = p > 0 ? s.current.data() + (p - 1) * nx * m : nullptr;
    for (std::size_t px = 0; px < nx; ++px)
      for (std::size_t j = 0; j < m; ++j) {
        const std::size_t at = px * m + j;
        const std::int32_t L = px > 0 ? cur[at - m] : 0, U = s.row > 0 ? up[at] : 0;
        std::uint64_t act = 2 * mag(L) + 2 * mag(U);
        if (j >= 1) act += mag(cur[at - 1]);
        if (j >= 2) act += mag(cur[at - 2]);
        if (below_plane) act += 2 * mag(below_plane[at]);
        Context c;
        c.band = band_of(j);
        c.act = log_bucket(act, kActs - 1);
        c.scale = log_bucket(16 * s.sum[j] / (s.count[j] + 1), kScales - 1);
        c.sign_ctx = sign3(L) * 3 + sign3(U);
        const std::int32_t v = code_value(rc, s.models, c, cur[at], name);
        cur[at] = v;
        s.sum[j] += mag(v);
        ++s.count[j];
      }
  }
  std::swap(s.previous, s.current);
  ++s.row;
}

template <class RC>
void code_column_entries(RC& rc, std::vector<std::int16_t>& v, std::size_t d, std::size_t m, const std::string& name) {
  Models M;
  for (std::size_t j = 0; j < m; ++j) {
    std::uint64_t sum = 0;
    for (std::size_t i = 0; i < d; ++i) {
      const std::size_t at = j * d + i;
      const std::int32_t prev = i ? v[at - 1] : 0, prev2 = i > 1 ? v[at - 2] : 0, left = j ? v[at - d] : 0;
      Context c;
      c.band = band_of(j);
      c.act = log_bucket((2 * mag(prev) + mag(prev2) + mag(left)) >> 4, kActs - 1);
      c.scale = log_bucket(sum / (i + 1) >> 2, kScales - 1);
      c.sign_ctx = sign3(prev) * 3 + sign3(left);
      const std::int32_t x = code_value(rc, M, c, v[at], name);
      if (x < -32768 || x > 32767) throw data_error(name + ": range-coded basis entry out of range");
      v[at] = std::int16_t(x);
      sum += mag(x);
    }
  }
}

}  // namespace

std::string code_coefficients(const std::vector<std::int32_t>& q, std::size_t m, const CoefficientGrid& grid,
                              CodingOrder order) {
  if (q.size() != m * grid.observations()) throw usage_error("internal: coefficient count disagrees with the grid");
  std::vector<std::int32_t> copy = q;
  Encoder rc;
  code_all(rc, copy, m, grid, order, "encoder");
  return rc.finish();
}

std::vector<std::int32_t> decode_coefficients(std::string_view bytes, std::size_t m, const CoefficientGrid& grid,
                                              CodingOrder order, const std::string& name) {
  std::vector<std::int32_t> q(m * grid.observations(), 0);
  Decoder rc(bytes, name);
  code_all(rc, q, m, grid, order, name);
  rc.finish();
  return q;
}

struct CoefficientRowEncoder::State {
  RowContext context;
  Encoder rc;
  State(std::size_t m, const CoefficientGrid& g) : context(m, g) {}
};

CoefficientRowEncoder::CoefficientRowEncoder(std::size_t m, const CoefficientGrid& grid) : state_(new State(m, grid)) {}
CoefficientRowEncoder::~CoefficientRowEncoder() { delete state_; }

void CoefficientRowEncoder::add_row(const std::int32_t* q) {
  RowContext& s = state_->context;
  std::copy(q, q + s.current.size(), s.current.begin());
  code_row(state_->rc, s, "encoder");
}

std::string CoefficientRowEncoder::finish() {
  if (state_->context.row != state_->context.ny) throw usage_error("internal: coefficient rows missing before finish()");
  return state_->rc.finish();
}

struct CoefficientRowDecoder::State {
  std::string name;  // first: the Decoder keeps a reference to it
  RowContext context;
  Decoder rc;
  State(std::string_view bytes, std::size_t m, const CoefficientGrid& g, const std::string& n)
      : name(n), context(m, g), rc(bytes, name) {}
};

CoefficientRowDecoder::CoefficientRowDecoder(std::string_view bytes, std::size_t m, const CoefficientGrid& grid,
                                             const std::string& name)
    : state_(new State(bytes, m, grid, name)) {}
CoefficientRowDecoder::~CoefficientRowDecoder() { delete state_; }

void CoefficientRowDecoder::next_row(std::int32_t* q) {
  RowContext& s = state_->context;
  code_row(state_->rc, s, state_->name);
  std::copy(s.previous.begin(), s.previous.end(), q);  // code_row swapped the finished row into `previous`
}

void CoefficientRowDecoder::finish() {
  if (state_->context.row != state_->context.ny) throw data_error(state_->name + ": coefficient rows missing");
  state_->rc.finish();
}

std::string code_columns(const std::vector<std::int16_t>& v, std::size_t d) {
  std::vector<std::int16_t> copy = v;
  Encoder rc;
  code_column_entries(rc, copy, d, d ? v.size() / d : 0, "encoder");
  return rc.finish();
}

std::vector<std::int16_t> decode_columns(std::string_view bytes, std::size_t d, std::size_t m, const std::string& name) {
  std::vector<std::int16_t> v(d * m, 0);
  Decoder rc(bytes, name);
  code_column_entries(rc, v, d, m, name);
  rc.finish();
  return v;
}

}  // namespace pcasweep
