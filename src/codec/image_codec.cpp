#include "codec/image_codec.hpp"

#include <algorithm>
#include <cmath>
#include <numeric>

#include "codec/dct.hpp"
#include "codec/quantize.hpp"
#include "core/error.hpp"
#include "observe/raster.hpp"

namespace pcasweep {

namespace {

// The decoder's copy of the embedded basis column j.
Eigen::VectorXd fixed_column(const std::vector<std::int16_t>& fixed, float scale, Eigen::Index d, std::size_t j) {
  Eigen::VectorXd v(d);
  for (Eigen::Index i = 0; i < d; ++i) v(i) = component_from_fixed(fixed[j * std::size_t(d) + std::size_t(i)], scale);
  return v;
}

Eigen::VectorXd fixed_mean(const std::vector<std::uint16_t>& fixed, double max_value) {
  Eigen::VectorXd m(Eigen::Index(fixed.size()));
  for (std::size_t i = 0; i < fixed.size(); ++i) m(Eigen::Index(i)) = mean_from_fixed(fixed[i], max_value);
  return m;
}

}  // namespace

EncodeResult encode_image(const Image& image, const PatchOptions& patch, const BasisChoice& choice,
                          const CodecSettings& settings, const std::string& name) {
  const PatchLayout layout(image, patch, name);
  const Eigen::Index d = layout.dimension(), n = layout.observation_count();
  if (n < 1) throw usage_error(name + ": no patches to encode");
  const double top = image.max_value();
  const Eigen::MatrixXd X = layout.observe({image});

  CodedImage c;
  c.width = std::uint32_t(image.width);
  c.height = std::uint32_t(image.height);
  c.channels = std::uint8_t(image.channels);
  c.bit_depth = std::uint8_t(image.bit_depth);
  c.patch = layout.options();
  c.basis_kind = choice.kind;
  c.dimension = std::uint32_t(d);
  c.observations = std::uint32_t(n);

  // The decoder's mean and candidate columns (d×r_avail), in the order components are considered.
  Eigen::VectorXd mean;
  Eigen::MatrixXd columns;
  std::vector<std::uint32_t> column_index;
  std::vector<float> scales;
  std::vector<std::int16_t> fixed_columns;
  if (choice.kind == BasisKind::dct) {
    const Eigen::VectorXd data_mean = X.colwise().mean().transpose();
    c.mean_fixed.resize(std::size_t(d));
    for (Eigen::Index i = 0; i < d; ++i) c.mean_fixed[std::size_t(i)] = mean_to_fixed(data_mean(i), top);
    mean = fixed_mean(c.mean_fixed, top);
    const Eigen::MatrixXd all = patch_dct_basis(c.patch.patch_height, c.patch.patch_width,
                                                c.patch.colour == ColourMode::joint ? image.channels : 1);
    Eigen::MatrixXd centred = X;
    centred.rowwise() -= mean.transpose();
    const Eigen::VectorXd power = (centred * all).colwise().squaredNorm().transpose();
    std::vector<std::uint32_t> order(static_cast<std::size_t>(d));
    std::iota(order.begin(), order.end(), 0u);
    std::stable_sort(order.begin(), order.end(), [&](std::uint32_t a, std::uint32_t b) { return power(a) > power(b); });
    columns.resize(d, d);
    for (Eigen::Index j = 0; j < d; ++j) columns.col(j) = all.col(order[std::size_t(j)]);
    column_index = order;
  } else {
    if (!choice.basis) throw usage_error("internal: encode without a basis");
    const Basis& b = *choice.basis;
    if (b.dimension() != d) {
      throw usage_error(name + ": the basis has d = " + std::to_string(b.dimension()) + " but the patch geometry gives d = " +
                        std::to_string(d));
    }
    const Eigen::Index r = b.rank();
    column_index.resize(std::size_t(r));
    std::iota(column_index.begin(), column_index.end(), 0u);
    if (choice.kind == BasisKind::external) {
      mean = b.mean;
      columns = b.components;
    } else {
      c.mean_fixed.resize(std::size_t(d));
      for (Eigen::Index i = 0; i < d; ++i) c.mean_fixed[std::size_t(i)] = mean_to_fixed(b.mean(i), top);
      mean = fixed_mean(c.mean_fixed, top);
      columns.resize(d, r);
      scales.resize(std::size_t(r));
      fixed_columns.resize(std::size_t(d * r));
      for (Eigen::Index j = 0; j < r; ++j) {
        scales[std::size_t(j)] = component_scale(b.components.col(j));
        for (Eigen::Index i = 0; i < d; ++i)
          fixed_columns[std::size_t(j * d + i)] = component_to_fixed(b.components(i, j), scales[std::size_t(j)]);
        columns.col(j) = fixed_column(fixed_columns, scales[std::size_t(j)], d, std::size_t(j));
      }
    }
  }
  const Eigen::Index available = columns.cols();
  if (settings.k < 1 || settings.k > available) {
    throw usage_error("--k: k = " + std::to_string(settings.k) + " is outside 1.." + std::to_string(available) +
                      " (components available in the basis)");
  }
  const Eigen::Index k = settings.k;
  c.k = std::uint32_t(k);

  Eigen::MatrixXd centred = X;
  centred.rowwise() -= mean.transpose();
  const Eigen::MatrixXd coefficients = centred * columns.leftCols(k);  // N×k
  const double dof = n > 1 ? double(n - 1) : 1.0;
  const Eigen::VectorXd power = coefficients.colwise().squaredNorm().transpose() / dof;
  const double total = centred.colwise().squaredNorm().sum() / dof;
  const double dropped = std::max(0.0, total - power.sum());

  EncodeResult result;
  if (settings.target_psnr) {
    result.nominal_psnr_db = *settings.target_psnr;
    result.water_level = water_level_for_target_psnr(power, dropped, d, *settings.target_psnr, top);
  } else {
    result.nominal_psnr_db = quality_psnr_db(settings.quality);
    result.water_level = water_level_for_psnr(result.nominal_psnr_db, top);
  }
  const double theta = result.water_level;
  c.water_level = theta;
  result.predicted_mse = predicted_mse(power, dropped, d, theta);
  result.gaussian_rate_bits = theta > 0 ? gaussian_rate_bits(power, theta) : 0.0;
  const std::vector<float> steps = step_sizes(power, theta);

  for (Eigen::Index j = 0; j < k; ++j) {
    const float step = steps[std::size_t(j)];
    if (step <= 0.0f) continue;
    c.component_index.push_back(column_index[std::size_t(j)]);
    c.steps.push_back(step);
    if (choice.kind == BasisKind::embedded) {
      c.column_scale.push_back(scales[std::size_t(j)]);
      c.column_fixed.insert(c.column_fixed.end(), fixed_columns.begin() + j * d, fixed_columns.begin() + (j + 1) * d);
    }
  }
  const std::size_t m = c.coded();
  if (choice.kind == BasisKind::external) c.basis_sha256 = choice.sha256;
  c.coefficients.resize(std::size_t(n) * m);
  {
    std::size_t slot = 0;
    for (Eigen::Index j = 0; j < k; ++j) {
      const float step = steps[std::size_t(j)];
      if (step <= 0.0f) continue;
      for (Eigen::Index i = 0; i < n; ++i)
        c.coefficients[slot * std::size_t(n) + std::size_t(i)] = quantize_coefficient(coefficients(i, j), step);
      ++slot;
    }
  }
  result.coded = int(m);
  result.coefficient_entropy_bits = order0_entropy_bits(c.coefficients, m);
  result.side_bytes = m * 8 + c.mean_fixed.size() * 2 + c.column_scale.size() * 4 + c.column_fixed.size() * 2;
  const bool zstd = settings.entropy == EntropyStage::zstd;
  if (!zstd || settings.compare_entropy) {
    c.coder = EntropyCoder::adaptive;
    std::string adaptive = write_container(c, settings.zstd_level);
    result.adaptive_file_bytes = adaptive.size();
    if (!zstd) {
      result.coder = EntropyCoder::adaptive;
      result.bytes = std::move(adaptive);
    }
  }
  if (zstd || settings.compare_entropy) {
    c.coder = EntropyCoder::varint_zstd;
    std::string varint = write_container(c, settings.zstd_level);
    c.coder = EntropyCoder::planes_zstd;
    std::string planes = write_container(c, settings.zstd_level);
    result.varint_file_bytes = varint.size();
    result.planes_file_bytes = planes.size();
    if (zstd) {
      const bool use_planes = planes.size() < varint.size();
      result.coder = use_planes ? EntropyCoder::planes_zstd : EntropyCoder::varint_zstd;
      result.bytes = std::move(use_planes ? planes : varint);
    }
  }
  return result;
}

Image decode_coded_image(std::string_view bytes, const std::string& name, const SavedBasis* external,
                         const Sha256* external_sha256, std::size_t* clipped) {
  const CodedImage c = read_container(bytes, name);
  const Eigen::Index d = c.dimension, n = c.observations;
  const std::size_t m = c.coded();
  const double top = c.bit_depth == 16 ? 65535.0 : 255.0;
  Eigen::VectorXd mean;
  Eigen::MatrixXd columns(d, Eigen::Index(m));
  switch (c.basis_kind) {
    case BasisKind::embedded:
      mean = fixed_mean(c.mean_fixed, top);
      for (std::size_t j = 0; j < m; ++j) columns.col(Eigen::Index(j)) = fixed_column(c.column_fixed, c.column_scale[j], d, j);
      break;
    case BasisKind::dct: {
      mean = fixed_mean(c.mean_fixed, top);
      const Eigen::MatrixXd all = patch_dct_basis(c.patch.patch_height, c.patch.patch_width,
                                                  c.patch.colour == ColourMode::joint ? c.channels : 1);
      for (std::size_t j = 0; j < m; ++j) columns.col(Eigen::Index(j)) = all.col(Eigen::Index(c.component_index[j]));
      break;
    }
    case BasisKind::external: {
      if (!external || !external_sha256) {
        throw usage_error(name + ": this file was coded with an external basis (SHA-256 " + to_hex(c.basis_sha256) +
                          "); pass it with --basis");
      }
      if (*external_sha256 != c.basis_sha256) {
        throw data_error(name + ": the basis given has SHA-256 " + to_hex(*external_sha256) + " but the file was coded with " +
                         to_hex(c.basis_sha256));
      }
      const SavedBasis& s = *external;
      if (s.channels != c.channels || s.bit_depth != c.bit_depth || s.patch.patch_height != c.patch.patch_height ||
          s.patch.patch_width != c.patch.patch_width || s.patch.colour != c.patch.colour || s.basis.dimension() != d) {
        throw data_error(name + ": the basis geometry does not match the coded image");
      }
      mean = s.basis.mean;
      for (std::size_t j = 0; j < m; ++j) {
        if (c.component_index[j] >= std::uint32_t(s.basis.rank())) {
          throw data_error(name + ": the file uses component " + std::to_string(c.component_index[j] + 1) +
                           " but the basis has " + std::to_string(s.basis.rank()));
        }
        columns.col(Eigen::Index(j)) = s.basis.components.col(Eigen::Index(c.component_index[j]));
      }
      break;
    }
  }
  Eigen::MatrixXd coefficients(n, Eigen::Index(m));
  for (std::size_t j = 0; j < m; ++j)
    for (Eigen::Index i = 0; i < n; ++i)
      coefficients(i, Eigen::Index(j)) = dequantize_coefficient(c.coefficients[j * std::size_t(n) + std::size_t(i)], c.steps[j]);
  Eigen::MatrixXd xhat = coefficients * columns.transpose();
  xhat.rowwise() += mean.transpose();

  Image like;
  like.width = int(c.width);
  like.height = int(c.height);
  like.channels = c.channels;
  like.bit_depth = c.bit_depth;
  like.channel_names = default_channel_names(c.channels);
  const PatchLayout layout(like, c.patch, name);
  const std::vector<Raster> folded = layout.fold(xhat);
  return quantize(folded.front(), like, clipped);
}

}  // namespace pcasweep
