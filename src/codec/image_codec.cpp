#include "codec/image_codec.hpp"

#include <algorithm>
#include <cmath>
#include <numeric>

#include "codec/dct.hpp"
#include "codec/quantize.hpp"
#include "core/error.hpp"
#include "observe/patch_blocks.hpp"
#include "solve/blocked_operator.hpp"

namespace pcasweep {

namespace {

Image geometry_of(const CodedImage& c) {
  Image like;
  like.width = int(c.width);
  like.height = int(c.height);
  like.channels = c.channels;
  like.bit_depth = c.bit_depth;
  like.channel_names = default_channel_names(c.channels);
  return like;
}

double max_value_of(int bit_depth) { return bit_depth == 16 ? 65535.0 : 255.0; }

// Coefficient power of each column of `columns` (d×r) about `mean`: diag(Vᵀ·S_μ̂·V)/(N−1),
// S_μ̂ = scatter + N·δδᵀ with δ = data mean − mean (the scatter about `mean`).
Eigen::VectorXd column_power(const PatchMoments& m, const Eigen::VectorXd& mean, const Eigen::MatrixXd& columns,
                             double& total) {
  const double n = double(m.observations), dof = m.observations > 1 ? n - 1.0 : 1.0;
  const Eigen::VectorXd delta = m.mean - mean;
  const Eigen::MatrixXd sv = m.scatter * columns;              // d×r
  const Eigen::RowVectorXd shift = delta.transpose() * columns;  // 1×r
  Eigen::VectorXd power(columns.cols());
  for (Eigen::Index j = 0; j < columns.cols(); ++j)
    power(j) = std::max(0.0, (columns.col(j).dot(sv.col(j)) + n * shift(j) * shift(j)) / dof);
  total = std::max(0.0, (m.scatter.trace() + n * delta.squaredNorm()) / dof);
  return power;
}

}  // namespace

PatchMoments patch_moments(const PatchLayout& layout, const Image& image) {
  const PatchBlocks blocks(layout, image);
  const BlockedOperator<double> op(blocks);
  PatchMoments m;
  m.observations = op.rows();
  m.mean = op.mean();
  m.scatter = op.scatter();
  return m;
}

DecoderBasis decoder_basis(const PatchLayout& layout, int bit_depth, const PatchMoments& moments,
                           const BasisChoice& choice, const std::string& name) {
  const Eigen::Index d = layout.dimension();
  const double top = max_value_of(bit_depth);
  DecoderBasis b;
  b.kind = choice.kind;
  b.observations = moments.observations;
  if (moments.mean.size() != d) throw usage_error("internal: patch moments of another geometry");
  const auto fixed_mean = [&](const Eigen::VectorXd& mean) {
    b.mean_fixed.resize(std::size_t(d));
    b.mean.resize(d);
    for (Eigen::Index i = 0; i < d; ++i) {
      b.mean_fixed[std::size_t(i)] = mean_to_fixed(mean(i), top);
      b.mean(i) = mean_from_fixed(b.mean_fixed[std::size_t(i)], top);
    }
  };
  if (choice.kind == BasisKind::dct) {
    fixed_mean(moments.mean);
    const Eigen::MatrixXd all = patch_dct_basis(layout.options().patch_height, layout.options().patch_width,
                                                layout.planes() == 1 ? layout.channels() : 1);
    OrderedDct ordered = order_dct_by_variance(all, column_power(moments, b.mean, all, b.total));
    b.columns = std::move(ordered.columns);
    b.power = std::move(ordered.variances);
    b.column_index = std::move(ordered.order);
    return b;
  }
  if (!choice.basis) throw usage_error("internal: encode without a basis");
  const Basis& basis = *choice.basis;
  if (basis.dimension() != d) {
    throw usage_error(name + ": the basis has d = " + std::to_string(basis.dimension()) +
                      " but the patch geometry gives d = " + std::to_string(d));
  }
  const Eigen::Index r = basis.rank();
  b.column_index.resize(std::size_t(r));
  std::iota(b.column_index.begin(), b.column_index.end(), 0u);
  if (choice.kind == BasisKind::external) {
    b.sha256 = choice.sha256;
    b.mean = basis.mean;
    b.columns = basis.components;
  } else {
    fixed_mean(basis.mean);
    b.columns.resize(d, r);
    b.scales.resize(std::size_t(r));
    b.fixed_columns.resize(std::size_t(d * r));
    for (Eigen::Index j = 0; j < r; ++j) {
      const float scale = component_scale(basis.components.col(j));
      b.scales[std::size_t(j)] = scale;
      for (Eigen::Index i = 0; i < d; ++i) {
        const std::int16_t f = component_to_fixed(basis.components(i, j), scale);
        b.fixed_columns[std::size_t(j * d + i)] = f;
        b.columns(i, j) = component_from_fixed(f, scale);
      }
    }
  }
  b.power = column_power(moments, b.mean, b.columns, b.total);
  return b;
}

void project_band(const DecoderBasis& basis, const RowBlock& band, RowBlock& out) {
  const Eigen::RowVectorXd shift = basis.mean.transpose() * basis.columns;
  out.resize(band.rows(), basis.columns.cols());
  out.noalias() = band * basis.columns;
  out.rowwise() -= shift;
}

CodingPlan plan_coding(const PatchLayout& layout, int bit_depth, const DecoderBasis& basis,
                       const CodecSettings& settings, const std::string& name) {
  const Eigen::Index d = layout.dimension(), available = basis.available();
  if (settings.k < 1 || settings.k > available) {
    throw usage_error("--k: k = " + std::to_string(settings.k) + " is outside 1.." + std::to_string(available) +
                      " (components available in the basis)");
  }
  (void)name;
  const double top = max_value_of(bit_depth);
  const Eigen::Index k = settings.k;
  const Eigen::VectorXd power = basis.power.head(k);
  const double dropped = std::max(0.0, basis.total - power.sum());

  CodingPlan plan;
  EncodeResult& f = plan.figures;
  if (settings.target_psnr) {
    f.nominal_psnr_db = *settings.target_psnr;
    f.water_level = water_level_for_target_psnr(power, dropped, d, *settings.target_psnr, top);
  } else {
    f.nominal_psnr_db = quality_psnr_db(settings.quality);
    f.water_level = water_level_for_psnr(f.nominal_psnr_db, top);
  }
  const double theta = f.water_level;
  f.predicted_mse = predicted_mse(power, dropped, d, theta);
  f.gaussian_rate_bits = theta > 0 ? gaussian_rate_bits(power, theta) : 0.0;
  const std::vector<float> steps = step_sizes(power, theta);

  CodedImage& c = plan.header;
  c.width = std::uint32_t(layout.width());
  c.height = std::uint32_t(layout.height());
  c.channels = std::uint8_t(layout.channels());
  c.bit_depth = std::uint8_t(bit_depth);
  c.patch = layout.options();
  c.basis_kind = basis.kind;
  c.coder = settings.entropy == EntropyStage::zstd ? EntropyCoder::varint_zstd : EntropyCoder::adaptive;
  c.dimension = std::uint32_t(d);
  c.observations = std::uint32_t(layout.observation_count());
  c.k = std::uint32_t(k);
  c.water_level = theta;
  if (basis.kind == BasisKind::external) c.basis_sha256 = basis.sha256;
  else c.mean_fixed = basis.mean_fixed;
  for (Eigen::Index j = 0; j < k; ++j) {
    const float step = steps[std::size_t(j)];
    if (step <= 0.0f) continue;
    plan.coded.push_back(j);
    c.component_index.push_back(basis.column_index[std::size_t(j)]);
    c.steps.push_back(step);
    if (basis.kind == BasisKind::embedded) {
      c.column_scale.push_back(basis.scales[std::size_t(j)]);
      c.column_fixed.insert(c.column_fixed.end(), basis.fixed_columns.begin() + j * d,
                            basis.fixed_columns.begin() + (j + 1) * d);
    }
  }
  const std::size_t m = plan.coded.size();
  plan.columns.resize(d, Eigen::Index(m));
  for (std::size_t s = 0; s < m; ++s) plan.columns.col(Eigen::Index(s)) = basis.columns.col(plan.coded[s]);
  plan.mean = basis.mean;
  f.coded = int(m);
  f.side_bytes = m * 8 + c.mean_fixed.size() * 2 + c.column_scale.size() * 4 + c.column_fixed.size() * 2;
  return plan;
}

void reconstruct_coded_band(const Eigen::MatrixXd& dequantized, const Eigen::MatrixXd& columns,
                            const Eigen::VectorXd& mean, RowBlock& out) {
  out.resize(dequantized.rows(), columns.rows());
  if (columns.cols() == 0) out.setZero();
  else out.noalias() = dequantized * columns.transpose();
  out.rowwise() += mean.transpose();
}

// ---------------------------------------------------------------- encoder

struct PatchEncoder::State {
  const CodingPlan& plan;
  const PatchLayout& layout;
  CodecSettings settings;
  CoefficientGrid grid;
  std::unique_ptr<CoefficientRowEncoder> coder;   // adaptive stream (always made: it is the file, or a size to compare)
  bool keep = false;                              // zstd or compare_entropy: every coefficient is kept
  std::vector<std::int32_t> all;                  // N·m, component-major, when keep
  std::vector<std::int32_t> row;                  // one patch row for the coder
  Eigen::MatrixXd dequantized;                    // band rows × m
  int next_patch_row = 0;
  State(const CodingPlan& p, const PatchLayout& l, const CodecSettings& s)
      : plan(p), layout(l), settings(s), grid(coefficient_grid(p.header)) {}
};

PatchEncoder::PatchEncoder(const CodingPlan& plan, const PatchLayout& layout, const CodecSettings& settings)
    : state_(std::make_unique<State>(plan, layout, settings)) {
  State& s = *state_;
  const std::size_t m = plan.coded.size();
  s.keep = settings.entropy == EntropyStage::zstd || settings.compare_entropy;
  if (!(settings.entropy == EntropyStage::zstd && !settings.compare_entropy))
    s.coder = std::make_unique<CoefficientRowEncoder>(m, s.grid);
  if (s.keep) s.all.assign(s.grid.observations() * m, 0);
  s.row.resize(s.grid.planes * s.grid.patches_across * m);
}

PatchEncoder::~PatchEncoder() = default;

void PatchEncoder::add_band(int py0, int py1, const RowBlock& projected, RowBlock* reconstruction) {
  State& s = *state_;
  const PatchLayout& L = s.layout;
  if (py0 != s.next_patch_row || py1 <= py0 || py1 > L.patches_down()) throw usage_error("internal: bands out of order");
  const int rows = py1 - py0, nx = L.patches_across(), planes = L.planes();
  const std::size_t m = s.plan.coded.size();
  if (projected.rows() != Eigen::Index(rows) * nx * planes) throw usage_error("internal: band has the wrong shape");
  const std::vector<float>& steps = s.plan.header.steps;
  s.dequantized.resize(projected.rows(), Eigen::Index(m));
  const std::size_t n = s.grid.observations();
  for (int py = py0; py < py1; ++py) {
    for (int plane = 0; plane < planes; ++plane)
      for (int px = 0; px < nx; ++px) {
        const Eigen::Index br = L.band_row(plane, py, px, py0, rows);
        std::int32_t* q = s.row.data() + (std::size_t(plane) * nx + px) * m;
        for (std::size_t j = 0; j < m; ++j) {
          q[j] = quantize_coefficient(projected(br, s.plan.coded[j]), steps[j]);
          s.dequantized(br, Eigen::Index(j)) = dequantize_coefficient(q[j], steps[j]);
        }
        if (s.keep) {
          const std::size_t obs = std::size_t(L.observation_row(plane, py, px));
          for (std::size_t j = 0; j < m; ++j) s.all[j * n + obs] = q[j];
        }
      }
    if (s.coder) s.coder->add_row(s.row.data());
  }
  s.next_patch_row = py1;
  if (reconstruction) reconstruct_coded_band(s.dequantized, s.plan.columns, s.plan.mean, *reconstruction);
}

EncodeResult PatchEncoder::finish() {
  State& s = *state_;
  if (s.next_patch_row != s.layout.patches_down()) throw usage_error("internal: encoder finished before the last band");
  EncodeResult r = s.plan.figures;
  CodedImage c = s.plan.header;
  const std::size_t m = s.plan.coded.size();
  if (s.coder) {
    c.coder = EntropyCoder::adaptive;
    std::string adaptive = write_container_coded(c, s.coder->finish(), s.settings.zstd_level);
    r.adaptive_file_bytes = adaptive.size();
    if (s.settings.entropy != EntropyStage::zstd) {
      r.coder = EntropyCoder::adaptive;
      r.bytes = std::move(adaptive);
    }
  }
  if (s.keep) {
    r.coefficient_entropy_bits = order0_entropy_bits(s.all, m);
    c.coefficients = std::move(s.all);
    c.coder = EntropyCoder::varint_zstd;
    std::string varint = write_container(c, s.settings.zstd_level);
    c.coder = EntropyCoder::planes_zstd;
    std::string planes = write_container(c, s.settings.zstd_level);
    r.varint_file_bytes = varint.size();
    r.planes_file_bytes = planes.size();
    if (s.settings.entropy == EntropyStage::zstd) {
      const bool use_planes = planes.size() < varint.size();
      r.coder = use_planes ? EntropyCoder::planes_zstd : EntropyCoder::varint_zstd;
      r.bytes = std::move(use_planes ? planes : varint);
    }
  }
  return r;
}

EncodeResult encode_image(const Image& image, const PatchOptions& patch, const BasisChoice& choice,
                          const CodecSettings& settings, const std::string& name, const PatchMoments* moments) {
  const PatchLayout layout(image, patch, name);
  if (layout.observation_count() < 1) throw usage_error(name + ": no patches to encode");
  PatchMoments own;
  if (!moments) own = patch_moments(layout, image);
  const DecoderBasis basis = decoder_basis(layout, image.bit_depth, moments ? *moments : own, choice, name);
  const CodingPlan plan = plan_coding(layout, image.bit_depth, basis, settings, name);
  PatchEncoder encoder(plan, layout, settings);
  const PatchBlocks blocks(layout, image);
  RowBlock band, projected;
  for (Eigen::Index b = 0; b < blocks.block_count(); ++b) {
    blocks.fill(b, band);
    project_band(basis, band, projected);
    encoder.add_band(blocks.first_patch_row(b), blocks.end_patch_row(b), projected, nullptr);
  }
  return encoder.finish();
}

// ---------------------------------------------------------------- decoder

struct PatchDecoder::State {
  std::string name;
  OpenedContainer opened;
  Image like;
  std::unique_ptr<PatchLayout> layout;
  std::unique_ptr<PatchFolder> folder;
  std::unique_ptr<CoefficientRowDecoder> coder;
  Eigen::VectorXd mean;
  Eigen::MatrixXd columns;  // d×m
  int band = 1, next_patch_row = 0;
  std::vector<std::int32_t> row;
  Eigen::MatrixXd dequantized;
  RowBlock xhat;
};

PatchDecoder::PatchDecoder(std::string_view bytes, const std::string& name, const SavedBasis* external,
                           const Sha256* external_sha256)
    : state_(std::make_unique<State>()) {
  State& s = *state_;
  s.name = name;
  s.opened = open_container(bytes, name);
  const CodedImage& c = s.opened.image;
  const Eigen::Index d = c.dimension;
  const std::size_t m = c.coded();
  const double top = c.bit_depth == 16 ? 65535.0 : 255.0;
  s.columns.resize(d, Eigen::Index(m));
  const auto mean_of = [&](const std::vector<std::uint16_t>& fixed) {
    Eigen::VectorXd v(Eigen::Index(fixed.size()));
    for (std::size_t i = 0; i < fixed.size(); ++i) v(Eigen::Index(i)) = mean_from_fixed(fixed[i], top);
    return v;
  };
  switch (c.basis_kind) {
    case BasisKind::embedded:
      s.mean = mean_of(c.mean_fixed);
      for (std::size_t j = 0; j < m; ++j)
        for (Eigen::Index i = 0; i < d; ++i)
          s.columns(i, Eigen::Index(j)) = component_from_fixed(c.column_fixed[j * std::size_t(d) + std::size_t(i)], c.column_scale[j]);
      break;
    case BasisKind::dct: {
      s.mean = mean_of(c.mean_fixed);
      const Eigen::MatrixXd all = patch_dct_basis(c.patch.patch_height, c.patch.patch_width,
                                                  c.patch.colour == ColourMode::joint ? c.channels : 1);
      for (std::size_t j = 0; j < m; ++j) s.columns.col(Eigen::Index(j)) = all.col(Eigen::Index(c.component_index[j]));
      break;
    }
    case BasisKind::external: {
      if (!external || !external_sha256) {
        throw usage_error(name + ": this file was coded with an external basis (SHA-256 " + to_hex(c.basis_sha256) +
                          "); pass it with --basis");
      }
      if (*external_sha256 != c.basis_sha256) {
        throw data_error(name + ": the basis given has SHA-256 " + to_hex(*external_sha256) +
                         " but the file was coded with " + to_hex(c.basis_sha256));
      }
      const SavedBasis& sb = *external;
      if (sb.channels != c.channels || sb.bit_depth != c.bit_depth || sb.patch.patch_height != c.patch.patch_height ||
          sb.patch.patch_width != c.patch.patch_width || sb.patch.colour != c.patch.colour ||
          sb.basis.dimension() != d) {
        throw data_error(name + ": the basis geometry does not match the coded image");
      }
      s.mean = sb.basis.mean;
      for (std::size_t j = 0; j < m; ++j) {
        if (c.component_index[j] >= std::uint32_t(sb.basis.rank())) {
          throw data_error(name + ": the file uses component " + std::to_string(c.component_index[j] + 1) +
                           " but the basis has " + std::to_string(sb.basis.rank()));
        }
        s.columns.col(Eigen::Index(j)) = sb.basis.components.col(Eigen::Index(c.component_index[j]));
      }
      break;
    }
  }
  s.like = geometry_of(c);
  s.layout = std::make_unique<PatchLayout>(s.like, c.patch, name);
  s.folder = std::make_unique<PatchFolder>(*s.layout);
  s.band = band_patch_rows(*s.layout);
  if (!s.opened.coefficients_decoded) s.coder = std::make_unique<CoefficientRowDecoder>(s.opened.coefficient_stream, m, coefficient_grid(c), name);
  s.row.resize(std::size_t(s.layout->planes()) * s.layout->patches_across() * m);
}

PatchDecoder::~PatchDecoder() = default;

const CodedImage& PatchDecoder::header() const { return state_->opened.image; }

int PatchDecoder::next_rows(std::vector<std::uint16_t>& rows, std::size_t* clipped) {
  State& s = *state_;
  const PatchLayout& L = *s.layout;
  const CodedImage& c = s.opened.image;
  const std::size_t m = c.coded(), n = std::size_t(L.observation_count());
  const int nx = L.patches_across(), planes = L.planes();
  // Bands that lie wholly in the mirror padding complete no row: decode on to the next row or the end.
  while (s.folder->ready_rows() == 0 && s.next_patch_row < L.patches_down()) {
    const int py0 = s.next_patch_row, py1 = std::min(L.patches_down(), py0 + s.band), band_rows = py1 - py0;
    s.dequantized.resize(Eigen::Index(band_rows) * nx * planes, Eigen::Index(m));
    for (int py = py0; py < py1; ++py) {
      if (s.coder) s.coder->next_row(s.row.data());
      for (int plane = 0; plane < planes; ++plane)
        for (int px = 0; px < nx; ++px) {
          const Eigen::Index br = L.band_row(plane, py, px, py0, band_rows);
          const std::size_t obs = std::size_t(L.observation_row(plane, py, px));
          for (std::size_t j = 0; j < m; ++j) {
            const std::int32_t q = s.coder ? s.row[(std::size_t(plane) * nx + px) * m + j] : c.coefficients[j * n + obs];
            s.dequantized(br, Eigen::Index(j)) = dequantize_coefficient(q, c.steps[j]);
          }
        }
    }
    s.next_patch_row = py1;
    if (py1 == L.patches_down() && s.coder) s.coder->finish();
    reconstruct_coded_band(s.dequantized, s.columns, s.mean, s.xhat);
    s.folder->add(py0, py1, s.xhat);
  }
  const int ready = s.folder->ready_rows();
  rows.resize(std::size_t(ready) * L.width() * L.channels());
  if (ready > 0) s.folder->take_quantized(rows.data(), ready, s.like.max_value(), clipped);
  return ready;
}

Image decode_coded_image(std::string_view bytes, const std::string& name, const SavedBasis* external,
                         const Sha256* external_sha256, std::size_t* clipped) {
  PatchDecoder decoder(bytes, name, external, external_sha256);
  Image out = geometry_of(decoder.header());
  out.samples.resize(std::size_t(out.width) * out.height * out.channels);
  std::vector<std::uint16_t> rows;
  std::size_t at = 0, clip = 0;
  while (decoder.next_rows(rows, &clip) > 0) {
    if (at + rows.size() > out.samples.size()) throw data_error(name + ": the decoder produced too many rows");
    std::copy(rows.begin(), rows.end(), out.samples.begin() + std::ptrdiff_t(at));
    at += rows.size();
  }
  if (at != out.samples.size()) throw data_error(name + ": the decoder produced too few rows");
  if (clipped) *clipped = clip;
  return out;
}

}  // namespace pcasweep
