// pcasweep/present/rd_outputs.hpp — the rate–distortion study as files and words.
//
// Contract: turns the typed study of pipeline/codec_study.hpp (RdStudy) into
// what `sweep` writes: jpeg/<stem>.q<Q>.jpg (the JPEG files the study
// measured), rd.csv (rd_table), rd.svg (rd_chart: PSNR against bits per pixel,
// one curve per method) and the "rate_distortion" part of summary.json. It
// computes no number of its own beyond reading the curves at a rate
// (psnr_at_rate). Every file goes through one OutputFolder, atomically.
#pragma once

#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "pipeline/codec_study.hpp"
#include "present/output_folder.hpp"
#include "report/svg.hpp"
#include "report/table.hpp"

namespace pcasweep {

// Columns method, quality, coded, bytes, bits_per_pixel, psnr_db, ssim, file; one row per
// point (quality and bytes empty for the bound, coded empty for JPEG).
Table rd_table(const std::vector<RdPoint>& points);

// "at 1 bpp (linear interpolation along each measured curve), PCA (12 components coded) gives
// 35.10 dB, JPEG 34.00 dB, DCT 34.50 dB; Gaussian R(D) from the eigenvalues 38.20 dB".
std::string rd_sentence(const std::vector<RdPoint>& points, double bpp);

// PSNR against bits per pixel, one curve per method, the bound dashed; `input` names the image.
ChartSpec rd_chart(const std::vector<RdPoint>& points, const std::string& input);

// What write_rd_outputs() produced.
struct RdReport {
  std::vector<RdPoint> points;  // with each JPEG point's file set
  std::string sentence;         // rd_sentence at 1.0 bpp
  RdCost cost;                  // what the study took
  nlohmann::json json;          // {"sentence", "psnr_db_at_bits_per_pixel": {...}, "note", "cost": {...}, "points": [...]}
};

// Writes the study into `out`: jpeg/<stem>.q<Q>.jpg (stem of `input`), rd.csv, rd.svg.
// Returns the report for summary.json and the console. Throws Error(data) on a write failure.
RdReport write_rd_outputs(RdStudy study, const std::string& input, const OutputFolder& out);

// Creates out_dir (before any work), runs rate_distortion() on `analysis` and writes its
// outputs there (write_rd_outputs). Throws Error as both do.
RdReport write_rate_distortion(const ImageAnalysis& analysis, const RdSettings& settings, const std::string& out_dir);

}  // namespace pcasweep
