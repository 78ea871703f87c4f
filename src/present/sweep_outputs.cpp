#include "present/sweep_outputs.hpp"

#include <algorithm>
#include <cmath>
#include <filesystem>

#include "core/error.hpp"
#include "io/atomic_file.hpp"
#include "io/png.hpp"
#include "measure/ssim.hpp"
#include "codec/patch_sweep.hpp"
#include "present/component_images.hpp"
#include "present/k_charts.hpp"
#include "present/k_rules.hpp"
#include "present/sweep_tables.hpp"

namespace pcasweep {

// Writes a point's rows as PNG, row by row.
class PngSink : public RowSink {
 public:
  PngSink(const std::string& path, const Image& like, const PngWriteOptions& options)
      : writer_(path, like.width, like.height, like.channels, like.bit_depth, options) {}
  void add(const std::uint16_t*, const std::uint16_t* written, int, int count) override { writer_.write_rows(written, count); }
  void finish() override { writer_.finish(); }

 private:
  PngRowWriter writer_;
};

// Writes the local SSIM map (0..1 scaled to 0..255, negative values as 0) as an 8-bit gray PNG.
class SsimMapWriter {
 public:
  SsimMapWriter(const std::string& path, int width, int height, const PngWriteOptions& options)
      : writer_(path, width, height, 1, 8, options), row_(std::size_t(width)) {}
  void add(const float* values) {
    for (std::size_t i = 0; i < row_.size(); ++i)
      row_[i] = std::uint16_t(std::lround(std::clamp(double(values[i]), 0.0, 1.0) * 255.0));
    writer_.write_rows(row_.data(), 1);
  }
  void finish() { writer_.finish(); }

 private:
  PngRowWriter writer_;
  std::vector<std::uint16_t> row_;
};

SweepFolderImages::SweepFolderImages(std::string dir, bool ssim_maps, const PngWriteOptions& png)
    : dir_(std::move(dir)), ssim_maps_(ssim_maps), png_(png) {}

SweepFolderImages::~SweepFolderImages() = default;

void SweepFolderImages::open(const ImageAnalysis& analysis) {
  analysis_ = &analysis;
  folder_.emplace(dir_);
}

const OutputFolder& SweepFolderImages::folder() const {
  if (!folder_) throw usage_error("internal: the sweep's output folder is used before open()");
  return *folder_;
}

std::string SweepFolderImages::name(std::size_t source, int k, const char* suffix) const {
  return folder().path(output_stem(analysis_->inputs[source]) + ".k" + std::to_string(k) + suffix);
}

StreamedSinks SweepFolderImages::streamed_sinks(const ImageAnalysis& a) {
  const Image& image = a.image();
  StreamedSinks sinks;
  sinks.for_k = [this, &image](int k) -> std::vector<RowSink*> {
    auto& p = pngs_[k];
    p = std::make_unique<PngSink>(name(0, k, ".png"), image, png_);
    return {p.get()};
  };
  const bool map_fits = image.width > 2 * kSsimRadius && image.height > 2 * kSsimRadius;
  if (ssim_maps_ && map_fits) {
    sinks.ssim_map_for_k = [this, &image](int k) -> std::function<void(int, const float*)> {
      auto& m = maps_[k];
      m = std::make_unique<SsimMapWriter>(name(0, k, ".ssim.png"), image.width - 2 * kSsimRadius,
                                          image.height - 2 * kSsimRadius, png_);
      SsimMapWriter* writer = m.get();
      return [writer](int, const float* values) { writer->add(values); };
    };
  }
  sinks.after_k = [this](int k, int owner) { after_k(k, owner); };
  return sinks;
}

// After the pass: k's own SSIM map is finished, or k repeats `owner` and gets copies of its files.
void SweepFolderImages::after_k(int k, int owner) {
  if (owner == k) {
    if (maps_.count(k)) maps_.at(k)->finish();
    return;
  }
  copy_file_atomic(name(0, owner, ".png"), name(0, k, ".png"));
  if (maps_.count(owner)) copy_file_atomic(name(0, owner, ".ssim.png"), name(0, k, ".ssim.png"));
}

void SweepFolderImages::image(int k, std::size_t source, const Image& image) {
  write_png(name(source, k, ".png"), image, png_);
  if (!ssim_maps_) return;
  const SsimResult s = compute_ssim(analysis_->sources[source], image, true);
  if (!s.map.empty()) write_png(name(source, k, ".ssim.png"), ssim_map_image(s), png_);
}

void SweepFolderImages::coded(int k, const std::string& bytes) { write_file_atomic(name(0, k, ".pcsc"), bytes); }

void write_sweep_tables(const ImageAnalysis& a, const std::vector<SweepRow>& rows, const nlohmann::json& settings,
                        const nlohmann::json& extra_summary, const OutputFolder& out) {
  out.write("spectrum.csv", render_csv(spectrum_table(a.basis)));
  out.write("sweep.csv", render_csv(sweep_table(rows, a.image().channel_names)));
  nlohmann::json summary = sweep_summary(a, rows, settings);
  if (extra_summary.is_object())
    for (const auto& [key, value] : extra_summary.items()) summary[key] = value;
  out.write("summary.json", summary.dump(2) + "\n");
}

std::vector<SweepRow> write_sweep(const ImageAnalysis& a, const std::vector<int>& ks, const std::string& out_dir,
                                  const nlohmann::json& settings, const nlohmann::json& extra_summary,
                                  bool ssim_maps, const SweepCoding& coding, const SweepOutput& output) {
  SweepFolderImages images(out_dir, ssim_maps, output.png);
  const std::vector<SweepRow> rows = sweep_into(a, ks, coding, output, &images);
  write_sweep_tables(a, rows, settings, extra_summary, images.folder());
  return rows;
}

SweepFiles write_sweep_files(SweepStudy& study, const nlohmann::json& settings, const SweepFileOptions& options,
                             const OutputFolder& out) {
  const ImageAnalysis& a = study.analysis;
  SweepFiles files;
  nlohmann::json extra = nlohmann::json::object();
  if (study.choice) extra["choose_k"] = k_choice_json(*study.choice);
  if (study.rd) {
    files.rd = write_rd_outputs(std::move(*study.rd), a.input(), out);
    study.rd.reset();
    extra["rate_distortion"] = files.rd->json;
  }
  write_sweep_tables(a, study.rows, settings, extra, out);
  if (study.choice) write_k_charts(a.basis, *study.choice, options.log_scale, a.input(), out);
  if (options.component_images)
    files.components_written = write_component_images(out, a.basis.components, a.layout->observation_shape());
  return files;
}

int write_spectrum_files(const ImageAnalysis& a, const KChoice& choice, const nlohmann::json& rules, bool log_scale,
                         const OutputFolder& out) {
  write_k_charts(a.basis, choice, log_scale, a.input(), out);
  out.write("rules.json", rules.dump(2) + "\n");
  return write_component_images(out, a.basis.components, a.layout->observation_shape());
}

}  // namespace pcasweep
