// pcasweep/observe/windows.hpp — a recording cut into (possibly overlapping) windows.
//
// Contract: for a recording of T frames and C channels, windows of N frames
// start every H frames (1 <= H <= N <= T). Each window is multiplied by an
// analysis window w (length N) before it becomes an observation; fold()
// multiplies each reconstructed window by the same w as synthesis window,
// overlap-adds, and divides every frame by the summed window power
// Σ_m w²(t − mH) that covers it (weighted overlap-add). At full rank the
// observations come back unchanged, so fold(observe(x)) = x for ANY hop
// H <= N, as long as every frame has Σ w² > 0 (see docs/signals.md).
//   taper rectangular: w = 1 (default when H = N: plain non-overlapping cuts;
//                      with H < N, overlaps are averaged)
//   taper sqrt_hann:   w(n) = sin(π n / N), the square root of the periodic
//                      Hann window (default when H < N). At H = N/2 the
//                      summed power is exactly 1 everywhere, the classic
//                      sqrt-Hann analysis/synthesis pair.
// Edges: the recording is extended by mirror reflection without repeating
// the edge frame (… x2, x1 | x0, x1, x2 … and … x[T−2] | x[T−1], x[T−2] …),
// by N − H frames in front, so the first frame is covered by as many windows as an interior one,
// and at the back to the end of the last window that covers frame T−1. fold()
// crops both back.
//   joint:    one observation per window with all channels, d = N·C,
//             variable order (frame, channel): variable n·C + c.
//   separate: each channel's windows are separate observations sharing one
//             basis, d = N, observation count M·C (channel-major: channel c's
//             windows are rows c·M … c·M + M − 1).
//
// A seam of its own, not a Layout (observe/layout.hpp): a Layout observes
// Images and folds back one Raster per image; a recording is one T×C matrix
// of samples in their native type, with a sample rate and no pixel grid, so
// WindowLayout takes and returns that matrix. It keeps the same promises as a
// Layout: name(), describe(), observation_count(), dimension(),
// variable_names(), and the exact round trip fold(observe(x)) == x.
#pragma once

#include <Eigen/Dense>
#include <string>
#include <vector>

namespace pcasweep {

enum class ChannelMode { joint, separate };
enum class Taper { automatic, rectangular, sqrt_hann };

struct WindowOptions {
  int window = 64;   // N, frames per window
  int hop = 0;       // H, frames between window starts; 0 = N (non-overlapping)
  Taper taper = Taper::automatic;
  ChannelMode channels = ChannelMode::joint;
};

// Parses "rectangular", "sqrt-hann", "auto". Throws Error(usage).
Taper parse_taper(const std::string& text);
// Parses "joint", "separate". Throws Error(usage).
ChannelMode parse_channel_mode(const std::string& text);

class WindowLayout {
 public:
  // frames T, channels C of the recording to cut; `source_name` for messages.
  // Throws Error(usage): window < 1, hop < 1 (an explicit hop of 0 must be
  // refused by the caller, since 0 here means "same as the window"), hop >
  // window, window longer than the recording.
  WindowLayout(Eigen::Index frames, int channels, const WindowOptions& options, const std::string& source_name);

  std::string name() const { return "windows"; }
  // e.g. "64-frame windows, hop 32 (50% overlap), sqrt-Hann taper, joint channels".
  std::string describe() const;
  // M·(1 or C): the number of observations.
  Eigen::Index observation_count() const;
  // N·C (joint) or N (separate).
  Eigen::Index dimension() const;
  // "t0:axial", "t0:radial", … (joint) or "t0", "t1", … (separate). Size d.
  std::vector<std::string> variable_names(const std::vector<std::string>& channel_names) const;

  // samples: T×C. Returns X, observation_count()×dimension().
  Eigen::MatrixXd observe(const Eigen::MatrixXd& samples) const;
  // X: observation_count()×dimension(). Returns the recording, T×C, unrounded.
  Eigen::MatrixXd fold(const Eigen::MatrixXd& X) const;

  const WindowOptions& options() const { return options_; }  // hop and taper resolved
  const Eigen::VectorXd& taper_values() const { return w_; }  // N
  Eigen::Index windows() const { return windows_; }           // M
  Eigen::Index front_padding() const { return front_; }
  Eigen::Index back_padding() const { return padded_ - front_ - frames_; }

 private:
  WindowOptions options_;
  Eigen::Index frames_;
  int channels_;
  Eigen::Index front_, padded_, windows_;
  Eigen::VectorXd w_;
  Eigen::VectorXd power_;  // Σ w² over the windows covering each padded frame
};

}  // namespace pcasweep
