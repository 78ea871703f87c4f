#include "observe/windows.hpp"

#include <cmath>
#include <cstdio>
#include <numbers>

#include "core/error.hpp"
#include "observe/patches.hpp"  // reflect_index

namespace pcasweep {

Taper parse_taper(const std::string& text) {
  if (text == "auto") return Taper::automatic;
  if (text == "rectangular") return Taper::rectangular;
  if (text == "sqrt-hann") return Taper::sqrt_hann;
  throw usage_error("--taper takes auto, rectangular or sqrt-hann, not '" + text + "'");
}

ChannelMode parse_channel_mode(const std::string& text) {
  if (text == "joint") return ChannelMode::joint;
  if (text == "separate") return ChannelMode::separate;
  throw usage_error("--channels takes joint or separate, not '" + text + "'");
}

WindowLayout::WindowLayout(Eigen::Index frames, int channels, const WindowOptions& options,
                           const std::string& source_name)
    : options_(options), frames_(frames), channels_(channels) {
  const int n = options_.window;
  if (n < 1) throw usage_error("--window must be at least 1 frame");
  if (options_.hop == 0) options_.hop = n;
  const int h = options_.hop;
  if (h < 1) throw usage_error("--hop must be at least 1 frame");
  if (h > n) {
    throw usage_error("--hop " + std::to_string(h) + " is longer than --window " + std::to_string(n) +
                      ": frames between windows would be skipped; use a hop no longer than the window");
  }
  if (channels_ < 1 || frames_ < 1) throw data_error(source_name + ": the recording holds no samples");
  if (n > frames_) {
    throw usage_error(source_name + ": --window " + std::to_string(n) + " is longer than the recording (" +
                      std::to_string(frames_) + " frames); use a window of at most " + std::to_string(frames_));
  }
  if (options_.taper == Taper::automatic) options_.taper = h == n ? Taper::rectangular : Taper::sqrt_hann;
  w_.resize(n);
  for (int i = 0; i < n; ++i)
    w_(i) = options_.taper == Taper::rectangular ? 1.0 : std::sin(std::numbers::pi * double(i) / double(n));
  front_ = h < n ? n - h : 0;
  windows_ = (front_ + frames_ - 1) / h + 1;
  padded_ = (windows_ - 1) * h + n;
  power_ = Eigen::VectorXd::Zero(padded_);
  for (Eigen::Index m = 0; m < windows_; ++m) power_.segment(m * h, n) += w_.cwiseAbs2();
  // Every recorded frame must carry some window power, or it could not be
  // recovered. With the padding above each frame sits at position 0 of one
  // window only if it also sits at position H of the previous one, where
  // sin(πH/N) > 0, so this holds; the check guards the reasoning.
  for (Eigen::Index t = front_; t < front_ + frames_; ++t)
    if (!(power_(t) > 0.0)) throw usage_error(source_name + ": window/hop combination leaves frames uncovered");
}

std::string WindowLayout::describe() const {
  const int n = options_.window, h = options_.hop;
  std::string s = std::to_string(n) + "-frame windows, hop " + std::to_string(h);
  if (h < n) {
    const double overlap = 100.0 * double(n - h) / double(n);
    char buffer[32];
    std::snprintf(buffer, sizeof buffer, "%.4g", overlap);
    s += " (" + std::string(buffer) + "% overlap)";
  }
  s += options_.taper == Taper::rectangular ? ", rectangular taper" : ", sqrt-Hann taper";
  if (channels_ > 1) s += options_.channels == ChannelMode::joint ? ", joint channels" : ", channels share one basis";
  return s;
}

Eigen::Index WindowLayout::observation_count() const {
  return options_.channels == ChannelMode::joint ? windows_ : windows_ * channels_;
}

Eigen::Index WindowLayout::dimension() const {
  return options_.channels == ChannelMode::joint ? Eigen::Index(options_.window) * channels_ : options_.window;
}

std::vector<std::string> WindowLayout::variable_names(const std::vector<std::string>& channel_names) const {
  std::vector<std::string> names;
  for (int i = 0; i < options_.window; ++i) {
    const std::string t = "t" + std::to_string(i);
    if (options_.channels == ChannelMode::joint && channels_ > 1) {
      for (int c = 0; c < channels_; ++c)
        names.push_back(t + ":" + (std::size_t(c) < channel_names.size() ? channel_names[c] : std::to_string(c)));
    } else {
      names.push_back(t);
    }
  }
  return names;
}

Eigen::MatrixXd WindowLayout::observe(const Eigen::MatrixXd& samples) const {
  if (samples.rows() != frames_ || samples.cols() != channels_) {
    throw usage_error("window layout built for another recording shape");
  }
  const int n = options_.window, h = options_.hop, c_count = channels_;
  const bool joint = options_.channels == ChannelMode::joint;
  const int length = int(frames_);
  Eigen::MatrixXd X(observation_count(), dimension());
#pragma omp parallel for schedule(static)
  for (Eigen::Index m = 0; m < windows_; ++m) {
    for (int i = 0; i < n; ++i) {
      const int t = reflect_index(long(m) * h + i - long(front_), length);
      for (int c = 0; c < c_count; ++c) {
        const double v = w_(i) * samples(t, c);
        if (joint) X(m, Eigen::Index(i) * c_count + c) = v;
        else X(Eigen::Index(c) * windows_ + m, i) = v;
      }
    }
  }
  return X;
}

Eigen::MatrixXd WindowLayout::fold(const Eigen::MatrixXd& X) const {
  if (X.rows() != observation_count() || X.cols() != dimension()) {
    throw usage_error("fold: observation matrix has the wrong shape for the window layout");
  }
  const int n = options_.window, h = options_.hop, c_count = channels_;
  const bool joint = options_.channels == ChannelMode::joint;
  // Overlap-add on the padded axis, channel by channel (channels in parallel:
  // each writes only its own column).
  Eigen::MatrixXd sum = Eigen::MatrixXd::Zero(padded_, c_count);
#pragma omp parallel for schedule(static)
  for (int c = 0; c < c_count; ++c)
    for (Eigen::Index m = 0; m < windows_; ++m)
      for (int i = 0; i < n; ++i)
        sum(m * h + i, c) +=
            w_(i) * (joint ? X(m, Eigen::Index(i) * c_count + c) : X(Eigen::Index(c) * windows_ + m, i));
  Eigen::MatrixXd out(frames_, c_count);
  for (int c = 0; c < c_count; ++c)
    out.col(c) = sum.col(c).segment(front_, frames_).cwiseQuotient(power_.segment(front_, frames_));
  return out;
}

}  // namespace pcasweep
