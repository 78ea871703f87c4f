// pcasweep/present/sweep_outputs.hpp — an image sweep's files.
//
// Contract: writes what a sweep of pipeline/image_study.hpp produces into one
// OutputFolder, every file atomically: <stem>.k<K>.png for each k (rows
// streamed as they are made; 16-bit stays 16-bit), optionally
// <stem>.k<K>.ssim.png (the local SSIM map: gray, 0..1 scaled to 0..255,
// (H−10)×(W−10)), <stem>.k<K>.pcsc when the sweep codes, and spectrum.csv,
// sweep.csv and summary.json; for a whole study (pipeline/sweep_study.hpp)
// also the rate–distortion files, the k charts and the component pictures.
// Computes nothing: the numbers come from pipeline/.
#pragma once

#include <map>
#include <memory>
#include <nlohmann/json.hpp>
#include <optional>
#include <string>
#include <vector>

#include "pipeline/image_study.hpp"
#include "pipeline/sweep_study.hpp"
#include "present/rd_outputs.hpp"
#include "present/output_folder.hpp"

namespace pcasweep {

class PngSink;
class SsimMapWriter;

// The sweep's images into a folder (pipeline's SweepImageOutput): open()
// creates the folder (Error(data) when it cannot); each distinct
// reconstruction is written once, and a k whose coded file repeats a smaller
// k's components gets a copy of that k's images.
class SweepFolderImages : public SweepImageOutput {
 public:
  // dir: the output folder (made on open()). ssim_maps: also the local SSIM maps. png: zlib effort and filter.
  SweepFolderImages(std::string dir, bool ssim_maps, const PngWriteOptions& png);
  ~SweepFolderImages() override;
  void open(const ImageAnalysis& analysis) override;
  StreamedSinks streamed_sinks(const ImageAnalysis& analysis) override;
  void image(int k, std::size_t source, const Image& image) override;
  void coded(int k, const std::string& bytes) override;
  // The folder; valid after open(). Throws Error(usage) before.
  const OutputFolder& folder() const;

 private:
  std::string name(std::size_t source, int k, const char* suffix) const;
  void after_k(int k, int owner);

  std::string dir_;
  bool ssim_maps_;
  PngWriteOptions png_;
  const ImageAnalysis* analysis_ = nullptr;
  std::optional<OutputFolder> folder_;
  std::map<int, std::unique_ptr<PngSink>> pngs_;
  std::map<int, std::unique_ptr<SsimMapWriter>> maps_;
};

// spectrum.csv, sweep.csv and summary.json (sweep_summary with settings, then
// each key of extra_summary, an object, added) into `out`. Throws Error(data).
void write_sweep_tables(const ImageAnalysis& analysis, const std::vector<SweepRow>& rows, const nlohmann::json& settings,
                        const nlohmann::json& extra_summary, const OutputFolder& out);

// Runs the sweep (pipeline's sweep_into) into `out_dir` (created once the k's are
// valid): the images as SweepFolderImages writes them, then write_sweep_tables.
// Returns the rows. With coding enabled each <stem>.k<K>.png is the decoding of
// <stem>.k<K>.pcsc, whose size is the row's bytes. Throws Error.
std::vector<SweepRow> write_sweep(const ImageAnalysis& analysis, const std::vector<int>& ks,
                                  const std::string& out_dir, const nlohmann::json& settings,
                                  const nlohmann::json& extra_summary = nlohmann::json::object(),
                                  bool ssim_maps = false, const SweepCoding& coding = {},
                                  const SweepOutput& output = {});

// What write_sweep_files() writes beyond the tables.
struct SweepFileOptions {
  bool component_images = true;  // components/ (present/component_images.hpp)
  bool log_scale = false;        // scree.svg's y axis
};

// What write_sweep_files() wrote, for the console.
struct SweepFiles {
  std::optional<RdReport> rd;  // when the study ran the RD study
  int components_written = 0;
};

// Writes a finished study's files into `out` (its images are already there,
// from SweepFolderImages): rd.csv, rd.svg and jpeg/ when study.rd is set
// (moved out of `study`), spectrum.csv, sweep.csv, summary.json (settings, then
// "choose_k" and "rate_distortion" when present), scree.svg and cumulative.svg
// when study.choice is set, components/ when asked. Throws Error(data).
SweepFiles write_sweep_files(SweepStudy& study, const nlohmann::json& settings, const SweepFileOptions& options,
                             const OutputFolder& out);

// What `spectrum --out` writes into `out`: scree.svg and cumulative.svg (log_scale: the
// scree's y axis), rules.json (`rules`, as given) and components/. Returns the component
// pictures written. Throws Error(data).
int write_spectrum_files(const ImageAnalysis& analysis, const KChoice& choice, const nlohmann::json& rules,
                         bool log_scale, const OutputFolder& out);

}  // namespace pcasweep
