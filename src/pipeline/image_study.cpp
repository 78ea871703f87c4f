#include "pipeline/image_study.hpp"

#include <algorithm>
#include <charconv>
#include <filesystem>
#include <set>

#include "core/error.hpp"
#include "codec/image_codec.hpp"
#include "pipeline/image_set.hpp"
#include "measure/ssim.hpp"
#include "observe/raster.hpp"
#include "reconstruct/reconstruct.hpp"

namespace pcasweep {

ImageAnalysis analyze_image(const std::string& path, const ImageStudySettings& settings) {
  Image image = read_image(path, read_options(settings));
  auto layout = std::make_unique<PatchLayout>(image, settings.patch, path);
  if (layout->observation_count() < 2) {
    throw usage_error(path + ": only one patch fits; use a smaller --patch or --stride");
  }
  return analyze_sources({path}, {std::move(image)}, std::move(layout), settings.solver);
}

ImageAnalysis analyze_sources(std::vector<std::string> inputs, std::vector<Image> sources,
                              std::unique_ptr<Layout> layout, const SolverSettings& solver) {
  ImageAnalysis a;
  a.inputs = std::move(inputs);
  a.sources = std::move(sources);
  for (const auto& s : a.sources) a.alpha_dropped = a.alpha_dropped || s.alpha_dropped;
  a.layout = std::move(layout);
  a.X = a.layout->observe(a.sources);
  a.basis = solve(a.X, solver);
  return a;
}

std::vector<int> default_ks(Eigen::Index d) {
  std::vector<int> ks;
  for (Eigen::Index k = 1; k < d; k *= 2) ks.push_back(int(k));
  ks.push_back(int(d));
  return ks;
}

std::vector<int> parse_k_list(const std::string& text) {
  std::set<int> values;
  std::size_t start = 0;
  while (start <= text.size()) {
    const std::size_t comma = text.find(',', start);
    const std::string part = text.substr(start, comma == std::string::npos ? std::string::npos : comma - start);
    int v = 0;
    auto [ptr, ec] = std::from_chars(part.data(), part.data() + part.size(), v);
    if (part.empty() || ec != std::errc() || ptr != part.data() + part.size()) {
      throw usage_error("--k takes a comma-separated list of whole numbers like 1,2,4,8, not '" + text + "'");
    }
    if (v < 1) throw usage_error("--k: k must be at least 1, got " + std::to_string(v));
    values.insert(v);
    if (comma == std::string::npos) break;
    start = comma + 1;
  }
  return {values.begin(), values.end()};
}

void check_ks(const std::vector<int>& ks, Eigen::Index d) {
  for (int k : ks) {
    if (k < 1 || k > d) {
      throw usage_error("--k: k = " + std::to_string(k) + " is outside 1.." + std::to_string(d) +
                        " (d, the number of variables per observation)");
    }
  }
}

std::vector<SweepRow> sweep_ks(const ImageAnalysis& a, const std::vector<int>& ks, const ImageSink& on_image,
                               const SweepCoding& coding) {
  check_ks(ks, a.basis.rank());
  const Eigen::VectorXd cumulative = cumulative_proportions(a.basis);
  const std::int64_t n = a.X.rows(), d = a.X.cols();
  double raw = 0.0;
  for (const auto& s : a.sources) raw += double(s.sample_count());
  ReconstructionSweep sweep(a.basis, a.X);
  // The codec handles one image cut into patches; other layouts keep the unquantised path.
  const auto* coded_layout =
      coding.enabled && a.sources.size() == 1 ? dynamic_cast<const PatchLayout*>(a.layout.get()) : nullptr;
  const double raw_bytes = coded_layout ? double(a.image().sample_count()) * (a.image().bit_depth / 8) : 0.0;
  const double png_bytes = coded_layout ? double(encode_png(a.image()).size()) : 0.0;
  std::vector<SweepRow> rows;
  for (int k : ks) {
    SweepRow row;
    row.k = k;
    std::vector<Image> written;
    if (coded_layout) {
      // Real bytes: encode with the image's own basis, then measure what the decoder gives back.
      CodecSettings settings;
      settings.k = k;
      settings.quality = coding.quality;
      settings.zstd_level = coding.zstd_level;
      BasisChoice choice;
      choice.basis = &a.basis;
      const EncodeResult encoded = encode_image(a.image(), coded_layout->options(), choice, settings, a.input());
      written.push_back(decode_coded_image(encoded.bytes, a.input(), nullptr, nullptr, &row.clipped_samples));
      row.bytes = std::int64_t(encoded.bytes.size());
      row.coded_components = encoded.coded;
      row.bits_per_pixel = 8.0 * double(encoded.bytes.size()) / pixel_count(a.image());
      row.compression_ratio = raw_bytes / double(encoded.bytes.size());
      row.ratio_to_png = png_bytes / double(encoded.bytes.size());
      if (coding.on_coded) coding.on_coded(k, encoded.bytes);
    } else {
      const Eigen::MatrixXd& xk = sweep.advance_to(k);
      const std::vector<Raster> folded = a.layout->fold(xk);
      for (std::size_t i = 0; i < folded.size(); ++i) {
        std::size_t clipped = 0;
        written.push_back(quantize(folded[i], a.sources[i], &clipped));
        row.clipped_samples += clipped;
      }
    }
    row.quality = compare_image_sets(a.sources, written);
    const SsimResult structural = compute_ssim_sets(a.sources, written);
    row.ssim = structural.ssim;
    row.channel_ssim = structural.channel_ssim;
    row.energy_retained = cumulative(k - 1);
    row.stored_values = std::int64_t(k) * d + n * k + d;
    row.ratio = double(row.stored_values) / raw;
    if (on_image)
      for (std::size_t i = 0; i < written.size(); ++i) on_image(k, i, written[i]);
    rows.push_back(std::move(row));
  }
  return rows;
}

Table spectrum_table(const Basis& basis) {
  Table t;
  t.columns = {"component", "eigenvalue", "proportion", "cumulative"};
  const Eigen::VectorXd p = proportions(basis), c = cumulative_proportions(basis);
  for (Eigen::Index i = 0; i < basis.rank(); ++i) t.add_row({std::int64_t(i + 1), basis.eigenvalues(i), p(i), c(i)});
  return t;
}

Table sweep_table(const std::vector<SweepRow>& rows, const std::vector<std::string>& channel_names) {
  Table t;
  t.columns = {"k", "mse", "rmse", "psnr_db", "ssim", "max_abs_error", "relative_error", "energy_retained",
               "stored_values_estimate", "ratio_estimate", "bytes", "coded_components", "bits_per_pixel",
               "compression_ratio", "ratio_to_png"};
  const bool per_channel = channel_names.size() > 1;
  if (per_channel)
    for (const auto& name : channel_names) t.columns.push_back("psnr_db_" + name);
  for (const auto& r : rows) {
    std::vector<Cell> cells = {std::int64_t(r.k), r.quality.mse, r.quality.rmse, r.quality.psnr_db, r.ssim,
                               r.quality.max_abs_error, r.quality.relative_error, r.energy_retained,
                               r.stored_values, r.ratio};
    if (r.bytes >= 0) {
      cells.insert(cells.end(), {Cell{r.bytes}, Cell{std::int64_t(r.coded_components)}, Cell{r.bits_per_pixel},
                                 Cell{r.compression_ratio}, Cell{r.ratio_to_png}});
    } else {
      cells.insert(cells.end(), 5, Cell{});
    }
    if (per_channel)
      for (double v : r.quality.channel_psnr_db) cells.push_back(v);
    t.add_row(std::move(cells));
  }
  return t;
}

nlohmann::json sweep_summary(const ImageAnalysis& a, const std::vector<SweepRow>& rows,
                             const nlohmann::json& settings) {
  nlohmann::json j;
  j["tool"] = {{"name", "pcasweep"}, {"version", PCASWEEP_VERSION}};
  const Image& first = a.image();
  j["input"] = {{"files", a.inputs},
                {"width", first.width},
                {"height", first.height},
                {"channels", first.channels},
                {"channel_names", first.channel_names},
                {"bit_depth", first.bit_depth},
                {"alpha", a.alpha_dropped ? "dropped (--drop-alpha)"
                                          : (first.channels == 2 || first.channels == 4 ? "kept as a channel"
                                                                                       : "none")}};
  j["settings"] = settings;
  j["layout"] = {{"name", a.layout->name()},
                 {"description", a.layout->describe()},
                 {"observations", a.X.rows()},
                 {"dimension", a.X.cols()}};
  const Eigen::VectorXd ev = a.basis.eigenvalues;
  j["solver"] = solver_json(a.basis);
  j["spectrum"] = {{"total_variance", a.basis.total_variance},
                   {"sum_of_eigenvalues", ev.sum()},
                   {"rows", to_json(spectrum_table(a.basis))}};
  j["sweep"] = to_json(sweep_table(rows, first.channel_names));
  j["size_estimate_note"] =
      "stored_values = k*d + N*k + d counts numbers kept (basis, coefficients, mean), not bytes; "
      "ratio = stored_values / raw samples. It is an estimate, not the size of a file.";
  return j;
}

std::string output_stem(const std::string& path) { return std::filesystem::path(path).stem().string(); }

}  // namespace pcasweep

#include "io/atomic_file.hpp"

namespace pcasweep {

std::vector<SweepRow> write_sweep(const ImageAnalysis& a, const std::vector<int>& ks, const std::string& out_dir,
                                  const nlohmann::json& settings, const nlohmann::json& extra_summary,
                                  bool ssim_maps, const SweepCoding& coding) {
  check_ks(ks, a.basis.rank());
  std::error_code ec;
  std::filesystem::create_directories(out_dir, ec);
  if (ec) throw data_error(out_dir + ": cannot create output folder: " + ec.message());
  const auto path_in = [&](const std::string& name) { return (std::filesystem::path(out_dir) / name).string(); };
  SweepCoding coding_with_files = coding;
  if (coding.enabled) {
    coding_with_files.on_coded = [&](int k, const std::string& bytes) {
      write_file_atomic(path_in(output_stem(a.input()) + ".k" + std::to_string(k) + ".pcsc"), bytes);
      if (coding.on_coded) coding.on_coded(k, bytes);
    };
  }
  auto rows = sweep_ks(a, ks, [&](int k, std::size_t source, const Image& image) {
    write_png(path_in(output_stem(a.inputs[source]) + ".k" + std::to_string(k) + ".png"), image);
    if (ssim_maps) {
      const SsimResult s = compute_ssim(a.sources[source], image, true);
      if (!s.map.empty())
        write_png(path_in(output_stem(a.inputs[source]) + ".k" + std::to_string(k) + ".ssim.png"), ssim_map_image(s));
    }
  }, coding_with_files);
  write_file_atomic(path_in("spectrum.csv"), render_csv(spectrum_table(a.basis)));
  write_file_atomic(path_in("sweep.csv"), render_csv(sweep_table(rows, a.image().channel_names)));
  nlohmann::json summary = sweep_summary(a, rows, settings);
  if (extra_summary.is_object())
    for (const auto& [key, value] : extra_summary.items()) summary[key] = value;
  write_file_atomic(path_in("summary.json"), summary.dump(2) + "\n");
  return rows;
}

}  // namespace pcasweep
