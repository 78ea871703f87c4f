#include "present/k_charts.hpp"

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <functional>
#include <limits>

#include "core/format.hpp"

namespace pcasweep {

namespace {

const MarkerShape kRuleMarkers[] = {MarkerShape::circle,  MarkerShape::square, MarkerShape::triangle,
                                    MarkerShape::diamond, MarkerShape::triangle_down, MarkerShape::plus,
                                    MarkerShape::cross};
const char* kRuleDashes[] = {"6 4", "2 3", "8 3 2 3", "4 4", "1 3", "10 4", "3 2"};
// Rule colours: Okabe–Ito without black (the curve) and yellow (too pale on
// white): orange, sky blue, bluish green, blue, vermillion, reddish purple.
// With 7 marker shapes the (colour, shape) pairs stay distinct for 42 rules.
const int kRulePalette[] = {1, 2, 3, 5, 6, 7};
int rule_colour(int m) { return kRulePalette[m % 6]; }
std::string file_name(const std::string& path) { return std::filesystem::path(path).filename().string(); }

// Each rule whose k is in 1..max_k: a hollow marker at (k, y_of(k)) named
// "<label>: k = <k><name_suffix(k)>" and a dashed vertical line at k, in the rule's
// colour. A rule without such a k keeps its place in the colour and shape cycle.
void mark_rules(ChartSpec& c, const std::vector<KSuggestion>& rules, Eigen::Index max_k,
                const std::function<double(int)>& y_of, const std::function<std::string(int)>& name_suffix) {
  int m = 0;
  for (const auto& rule : rules) {
    if (rule.k < 1 || rule.k > max_k) {
      ++m;
      continue;
    }
    const int idx = rule_colour(m);
    ChartSeries s;
    s.name = rule.label + ": k = " + (rule.lower_bound ? ">= " : "") + std::to_string(rule.k) + name_suffix(rule.k);
    s.style.palette_index = idx;
    s.style.line = false;
    s.style.marker = kRuleMarkers[m % 7];
    s.style.marker_size = 7.5 - 0.5 * (m % 4);
    s.style.hollow = true;
    s.x = {double(rule.k)};
    s.y = {y_of(rule.k)};
    c.series.push_back(s);
    ReferenceLine line;
    line.value = rule.k;
    line.colour = okabe_ito_palette()[std::size_t(idx)];
    line.dash = kRuleDashes[m % 7];
    c.lines.push_back(line);
    ++m;
  }
}

// Where a log axis draws eigenvalues at or below the zero threshold: one decade under
// the smallest positive one (1 when there is none).
double log_floor(const Basis& basis, double zero_threshold) {
  double smallest = INFINITY;
  for (Eigen::Index i = 0; i < basis.rank(); ++i)
    if (basis.eigenvalues(i) > zero_threshold) smallest = std::min(smallest, basis.eigenvalues(i));
  return std::isfinite(smallest) ? smallest / 10.0 : 1.0;
}

// The broken-stick expectation in eigenvalue units (fraction · total variance), for comparison.
ChartSeries broken_stick_series(const Basis& basis) {
  const std::vector<double> bs = broken_stick_expectations(int(basis.dimension()));
  ChartSeries stick;
  stick.name = "broken-stick expectation";
  stick.style.colour = "#777777";
  stick.style.dash = "3 3";
  stick.style.line_width = 1.4;
  for (Eigen::Index i = 0; i < basis.rank() && i < Eigen::Index(bs.size()); ++i) {
    stick.x.push_back(double(i + 1));
    stick.y.push_back(bs[std::size_t(i)] * basis.total_variance);
  }
  return stick;
}

// A horizontal reference line named in the legend.
ReferenceLine level_line(double value, const std::string& label, const std::string& colour, const std::string& dash) {
  ReferenceLine l;
  l.vertical = false;
  l.value = value;
  l.label = label;
  l.colour = colour;
  if (!dash.empty()) l.dash = dash;
  l.in_legend = true;
  return l;
}

// The scree chart's horizontal lines: Kaiser's mean eigenvalue, the Gavish–Donoho
// threshold (when defined) and, on a log axis, the rounding noise 1/12.
void add_scree_levels(ChartSpec& c, const Basis& basis, bool log_scale) {
  c.lines.push_back(level_line(basis.total_variance / double(basis.dimension()), "mean eigenvalue (Kaiser)", "#0072B2", ""));
  const double gd = gavish_donoho_threshold_eigenvalue(basis);
  if (std::isfinite(gd)) c.lines.push_back(level_line(gd, "Gavish-Donoho threshold", "#D55E00", ""));
  if (log_scale) c.lines.push_back(level_line(1.0 / 12.0, "rounding noise 1/12", "#009E73", "2 2"));
}

}  // namespace

ChartSpec scree_chart(const Basis& basis, const KChoice& choice, bool log_scale, const std::string& source) {
  ChartSpec c;
  c.title = "Scree: eigenvalue of each component";
  c.subtitle = file_name(source) + " — each rule's k marked on the curve";
  c.x_label = "component number";
  c.y_label = log_scale ? "eigenvalue (sample units squared, log scale)" : "eigenvalue (sample units squared)";
  c.log_y = log_scale;
  c.integer_x = true;
  const Eigen::Index r = basis.rank();
  // Log axis: exact zeros cannot be drawn; show them at a floor and say so.
  const double zero = choice.near_zero.zero_threshold;
  const double floor = log_scale ? log_floor(basis, zero) : std::numeric_limits<double>::quiet_NaN();
  const auto drawn_at_floor = [&](Eigen::Index i) { return log_scale && basis.eigenvalues(i) <= zero; };
  const auto y_of = [&](Eigen::Index i) { return drawn_at_floor(i) ? floor : basis.eigenvalues(i); };
  ChartSeries ev;
  ev.name = "eigenvalue";
  ev.style.colour = "#000000";
  ev.style.line_width = 1.8;
  if (r <= 120) {
    ev.style.marker = MarkerShape::circle;
    ev.style.marker_size = 2.2;
  }
  int zeros = 0;
  for (Eigen::Index i = 0; i < r; ++i) {
    ev.x.push_back(double(i + 1));
    ev.y.push_back(y_of(i));
    if (drawn_at_floor(i)) ++zeros;
  }
  c.series.push_back(ev);
  c.series.push_back(broken_stick_series(basis));
  mark_rules(c, choice.rules, r, [&](int k) { return y_of(k - 1); }, [](int) { return std::string(); });
  add_scree_levels(c, basis, log_scale);
  if (log_scale && zeros > 0)
    c.note = std::to_string(zeros) + " exact zero eigenvalue(s) drawn at the bottom (" + tick_label(floor) +
             "): a log axis cannot show zero.";
  if (!log_scale) c.note = "--log-scale spreads out the small eigenvalues.";
  if (!basis.complete())
    c.note += " Only the first " + std::to_string(r) + " of " + std::to_string(basis.dimension()) +
              " eigenvalues were computed.";
  return c;
}

ChartSpec cumulative_chart(const Basis& basis, const KChoice& choice, const std::string& source) {
  ChartSpec c;
  c.title = "Cumulative proportion of variance";
  c.subtitle = file_name(source) + " — gray dashed lines: the keep-variance goals";
  c.x_label = "number of components kept (k)";
  c.y_label = "variance kept (%)";
  c.integer_x = true;
  c.y_min = 0;
  c.y_max = 100;
  c.x_min = 0;
  const Eigen::VectorXd cum = cumulative_proportions(basis);
  ChartSeries s;
  s.name = "cumulative proportion";
  s.style.colour = "#000000";
  s.x.push_back(0);
  s.y.push_back(0);
  for (Eigen::Index i = 0; i < cum.size(); ++i) {
    s.x.push_back(double(i + 1));
    s.y.push_back(100.0 * cum(i));
  }
  if (cum.size() <= 120) {
    s.style.marker = MarkerShape::circle;
    s.style.marker_size = 2.2;
  }
  c.series.push_back(s);
  for (double f : choice.keep_fractions) {
    ReferenceLine l;
    l.vertical = false;
    l.value = 100.0 * f;
    l.colour = "#777777";
    c.lines.push_back(l);
  }
  mark_rules(c, choice.rules, cum.size(), [&](int k) { return 100.0 * cum(k - 1); },
             [&](int k) { return " (" + format_real(100.0 * cum(k - 1), 4) + "%)"; });
  std::string goals;
  for (double f : choice.keep_fractions) goals += (goals.empty() ? "" : ", ") + format_real(100.0 * f, 4) + "%";
  c.note = "Gray dashed lines: " + goals + " of the variance.";
  if (!basis.complete())
    c.note += " Only " + std::to_string(cum.size()) + " of " + std::to_string(basis.dimension()) +
              " components were computed.";
  return c;
}

void write_k_charts(const Basis& basis, const KChoice& choice, bool log_scale, const std::string& source,
                    const OutputFolder& out) {
  out.write("scree.svg", render_svg_chart(scree_chart(basis, choice, log_scale, source)));
  out.write("cumulative.svg", render_svg_chart(cumulative_chart(basis, choice, source)));
}

void write_k_charts(const Basis& basis, const KChoice& choice, bool log_scale, const std::string& source,
                    const std::string& out_dir) {
  write_k_charts(basis, choice, log_scale, source, OutputFolder(out_dir));
}

}  // namespace pcasweep
