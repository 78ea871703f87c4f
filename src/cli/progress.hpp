// pcasweep/cli/progress.hpp — telling a waiting person how far a batch has got.
//
// Contract: a ProgressDisplay receives BatchProgress updates (one thread at a
// time) and writes to stderr:
//   bar    (stderr is a terminal): one line redrawn in place at most 10 times a
//          second: [#####.....] 12/200 files  1 failed  3.4 files/s  ETA 0:55
//   lines  (stderr is a file or pipe): a plain line every 5 s and at the end
//          of each phase, e.g. "pcasweep: sweep 40/200 files, 0 failed, 3.4 files/s, ETA 47 s"
//   quiet  nothing.
// Rate and ETA are measured from the start of the current phase (training, sweep).
#pragma once

#include <chrono>
#include <cstdio>
#include <string>

#include "pipeline/batch.hpp"

namespace pcasweep::cli {

class ProgressDisplay {
 public:
  enum class Mode { bar, lines, quiet };
  // quiet: --quiet given. Returns bar when stderr is a terminal, else lines.
  static Mode detect(bool quiet);

  explicit ProgressDisplay(Mode mode, std::FILE* out = stderr);
  void update(const BatchProgress& p);
  // Ends the bar's line (call once after the batch).
  void finish();

  // "0:55", "1:02:03"; "--" when unknown. For tests.
  static std::string clock_text(double seconds);

 private:
  Mode mode_;
  std::FILE* out_;
  std::string phase_;
  std::chrono::steady_clock::time_point phase_start_, last_draw_;
  bool drawn_ = false;
  int width_ = 80;
};

}  // namespace pcasweep::cli
