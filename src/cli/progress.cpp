#include "cli/progress.hpp"

#include <sys/ioctl.h>
#include <unistd.h>

#include <algorithm>
#include <cmath>

namespace pcasweep::cli {

ProgressDisplay::Mode ProgressDisplay::detect(bool quiet) {
  if (quiet) return Mode::quiet;
  return ::isatty(STDERR_FILENO) ? Mode::bar : Mode::lines;
}

ProgressDisplay::ProgressDisplay(Mode mode, std::FILE* out) : mode_(mode), out_(out) {
  if (mode_ == Mode::bar) {
    winsize ws{};
    if (::ioctl(STDERR_FILENO, TIOCGWINSZ, &ws) == 0 && ws.ws_col > 20) width_ = ws.ws_col;
  }
}

std::string ProgressDisplay::clock_text(double s) {
  if (!std::isfinite(s) || s < 0) return "--";
  const long t = std::lround(s);
  char buf[32];
  if (t >= 3600) std::snprintf(buf, sizeof buf, "%ld:%02ld:%02ld", t / 3600, (t / 60) % 60, t % 60);
  else std::snprintf(buf, sizeof buf, "%ld:%02ld", t / 60, t % 60);
  return buf;
}

void ProgressDisplay::update(const BatchProgress& p) {
  if (mode_ == Mode::quiet) return;
  const auto now = std::chrono::steady_clock::now();
  if (p.phase != phase_) {
    if (mode_ == Mode::bar && drawn_) std::fputc('\n', out_);
    phase_ = p.phase;
    phase_start_ = now;
    last_draw_ = now;
    drawn_ = false;
  }
  const bool last = p.done >= p.total;
  const double since_draw = std::chrono::duration<double>(now - last_draw_).count();
  if (!last && ((mode_ == Mode::bar && since_draw < 0.1 && drawn_) || (mode_ == Mode::lines && since_draw < 5.0)))
    return;
  last_draw_ = now;
  const double elapsed = std::chrono::duration<double>(now - phase_start_).count();
  const double rate = elapsed > 0 ? double(p.done) / elapsed : 0.0;
  const double eta = rate > 0 ? double(p.total - p.done) / rate : NAN;
  char stats[160];
  std::snprintf(stats, sizeof stats, "%zu/%zu files  %zu failed  %.1f files/s  ETA %s", p.done, p.total, p.failed,
                rate, last ? "0:00" : clock_text(eta).c_str());
  if (mode_ == Mode::lines) {
    std::fprintf(out_, "pcasweep: %s %s\n", p.phase.c_str(), stats);
    std::fflush(out_);
    return;
  }
  const int bar = std::clamp(width_ - int(std::string(stats).size()) - int(p.phase.size()) - 6, 10, 40);
  const int filled = p.total ? int(double(bar) * double(p.done) / double(p.total)) : bar;
  std::string line = p.phase + " [" + std::string(std::size_t(filled), '#') + std::string(std::size_t(bar - filled), '.') +
                     "] " + stats;
  if (int(line.size()) > width_ - 1) line.resize(std::size_t(width_ - 1));
  std::fprintf(out_, "\r%s\x1b[K", line.c_str());
  std::fflush(out_);
  drawn_ = true;
}

void ProgressDisplay::finish() {
  if (mode_ == Mode::bar && drawn_) {
    std::fputc('\n', out_);
    std::fflush(out_);
  }
  drawn_ = false;
}

}  // namespace pcasweep::cli
