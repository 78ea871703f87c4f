#include "pipeline/k_choice.hpp"

#include <algorithm>
#include <cmath>
#include <filesystem>
#include <map>
#include <sstream>

#include "core/format.hpp"
#include "core/error.hpp"
#include "io/atomic_file.hpp"
#include "measure/image_metrics.hpp"
#include "measure/ssim.hpp"
#include "observe/patches.hpp"
#include "pipeline/patch_sweep.hpp"
#include "reconstruct/reconstruct.hpp"

namespace pcasweep {

namespace {

std::string fmt(double v, int digits = 4) { return format_real(v, digits); }

bool meets(const KQuality& q, const QualityTarget& t) {
  return (std::isnan(t.psnr_db) || q.psnr_db >= t.psnr_db) && (std::isnan(t.ssim) || q.ssim >= t.ssim);
}

std::string target_text(const QualityTarget& t) {
  std::string s;
  if (!std::isnan(t.psnr_db)) s += "PSNR >= " + fmt(t.psnr_db) + " dB";
  if (!std::isnan(t.ssim)) s += (s.empty() ? "" : " and ") + std::string("SSIM >= ") + fmt(t.ssim);
  return s;
}

std::string achieved_text(const KQuality& q, const QualityTarget& t) {
  std::string s;
  if (!std::isnan(t.psnr_db)) s += "PSNR " + fmt(q.psnr_db) + " dB";
  if (!std::isnan(t.ssim)) s += (s.empty() ? "" : " and ") + std::string("SSIM ") + fmt(q.ssim, 5);
  return s;
}

}  // namespace

std::vector<KQuality> evaluate_ks(const ImageAnalysis& a, const std::vector<int>& ks, bool with_ssim) {
  for (int k : ks)
    if (k < 1 || k > a.basis.rank()) throw usage_error("evaluate_k: k = " + std::to_string(k) + " out of range");
  std::vector<KQuality> out;
  if (a.streamed()) {
    // One streaming pass measures every k (pipeline/patch_sweep.hpp).
    PatchSweepInputs in;
    in.image = &a.image();
    in.layout = a.patches();
    in.basis = &a.basis;
    std::vector<PatchSweepPoint> points(ks.size());
    for (std::size_t i = 0; i < ks.size(); ++i) {
      points[i].k = ks[i];
      points[i].ssim = with_ssim;
    }
    const auto results = run_patch_sweep(in, points);
    for (std::size_t i = 0; i < ks.size(); ++i)
      out.push_back({ks[i], results[i].quality.psnr_db,
                     with_ssim ? results[i].ssim.ssim : std::numeric_limits<double>::quiet_NaN()});
    return out;
  }
  const Eigen::MatrixXd coefficients = project(a.basis, a.X, a.basis.rank());
  for (int k : ks) {
    const Eigen::MatrixXd xk = reconstruct(a.basis, coefficients.leftCols(k));
    const std::vector<Raster> folded = a.layout->fold(xk);
    std::vector<Image> written;
    for (std::size_t i = 0; i < folded.size(); ++i) written.push_back(quantize(folded[i], a.sources[i]));
    KQuality q;
    q.k = k;
    q.psnr_db = compare_image_sets(a.sources, written).psnr_db;
    q.ssim = with_ssim ? compute_ssim_sets(a.sources, written).ssim : std::numeric_limits<double>::quiet_NaN();
    out.push_back(q);
  }
  return out;
}

KQuality evaluate_k(const ImageAnalysis& a, int k, bool with_ssim) { return evaluate_ks(a, {k}, with_ssim).front(); }

TargetSearch search_quality_target(const ImageAnalysis& a, const QualityTarget& target) {
  if (!target.active()) throw usage_error("no quality target given (--target-psnr and/or --target-ssim)");
  TargetSearch ts;
  KSuggestion& s = ts.suggestion;
  s.rule = "quality_target";
  s.label = "quality target";
  const Basis& b = a.basis;
  const int r = int(b.rank());
  const bool with_ssim = !std::isnan(target.ssim);
  std::map<int, KQuality> cache;
  auto probe = [&](int k) -> bool {
    auto it = cache.find(k);
    if (it == cache.end()) {
      it = cache.emplace(k, evaluate_k(a, k, with_ssim)).first;
      ts.evaluated.push_back(it->second);
    }
    return meets(it->second, target);
  };

  // 1. Eckart–Young bracket (see the header for the bounds).
  double samples = 0.0;
  for (const auto& src : a.sources) samples += double(src.sample_count());
  const double big_n = double(b.observation_count), d = double(b.dimension());
  const PatchLayout* patches = a.patches();
  int lo = 1, hi = r;
  if (!std::isnan(target.psnr_db) && patches && samples > 0) {
    const double L = a.image().max_value();
    const double target_rmse = L / std::pow(10.0, target.psnr_db / 20.0);
    auto unrounded_rmse = [&](int k) { return std::sqrt(big_n * d * eckart_young_mse(b, k) / samples); };
    if (!with_ssim) {
      for (int k = 1; k <= r; ++k) {
        const double u = unrounded_rmse(k);
        if (std::min(u + 0.5, 2.0 * u) <= target_rmse) {
          hi = k;
          break;
        }
      }
    }
    const auto& o = patches->options();
    const bool tiles_exactly = o.stride_y == o.patch_height && o.stride_x == o.patch_width &&
                               patches->padded_width() == a.image().width &&
                               patches->padded_height() == a.image().height;
    if (tiles_exactly)
      for (int k = 1; k < hi; ++k)
        if (unrounded_rmse(k) - 0.5 > target_rmse) lo = k + 1;
  }
  ts.bracket_low = lo;
  ts.bracket_high = hi;

  // Not reachable at all?
  if (!probe(hi)) {
    if (hi < r && probe(r)) {
      lo = hi + 1;  // (only with an SSIM goal, where hi = r already; kept for safety)
      hi = r;
    } else {
      const KQuality& top = cache.at(hi);
      if (!b.complete()) {
        s.k = r;
        s.lower_bound = true;
        s.meaning = "not reached with the " + std::to_string(r) + " computed components (" + achieved_text(top, target) +
                    " at k = " + std::to_string(r) + "; goal " + target_text(target) + ")";
        s.note = "compute more components to find it";
      } else {
        s.meaning = "no k reaches " + target_text(target) + " (at k = " + std::to_string(r) + ": " +
                    achieved_text(top, target) + ")";
        s.note = "the goal is beyond what rounding to the output bit depth allows, or not met at k = d";
      }
      return ts;
    }
  }
  // 2. Binary search: probe(hi) holds; everything below lo fails.
  while (lo < hi) {
    const int mid = lo + (hi - lo) / 2;
    if (probe(mid)) hi = mid;
    else lo = mid + 1;
  }
  // 3. Verify: lo meets the goal (probed); lo − 1 must not.
  int k = lo;
  std::string wobble;
  if (k > ts.bracket_low) {  // below the bracket, k − 1 is already known to fail
    while (k > 1 && probe(k - 1)) {
      --k;
      wobble = "; quality is not monotone in k here, so the search walked down to the smallest k met";
    }
  }
  const KQuality& got = cache.at(k);
  s.k = k;
  s.meaning = "smallest k whose written image reaches " + target_text(target) + " (" + achieved_text(got, target) +
              "); " + std::to_string(ts.evaluated.size()) + " reconstructions in the bracket " +
              std::to_string(ts.bracket_low) + ".." + std::to_string(ts.bracket_high) + " from Eckart-Young";
  if (!wobble.empty()) s.note = wobble.substr(2);
  return ts;
}

int exhaustive_quality_k(const ImageAnalysis& a, const QualityTarget& target) {
  std::vector<int> all(std::size_t(a.basis.rank()));
  for (std::size_t i = 0; i < all.size(); ++i) all[i] = int(i + 1);
  for (const KQuality& q : evaluate_ks(a, all, !std::isnan(target.ssim)))
    if (meets(q, target)) return q.k;
  return 0;
}

KChoice choose_k(const ImageAnalysis& a, const KChoiceSettings& settings) {
  KChoice c;
  c.keep_fractions = settings.keep_fractions;
  c.rules = spectrum_rules(a.basis, settings.keep_fractions);
  if (settings.target.active()) {
    c.target_search = search_quality_target(a, settings.target);
    c.rules.push_back(c.target_search.suggestion);
  }
  c.agreement = rules_agreement(c.rules);
  c.near_zero = diagnose_near_zero(a.basis, a.layout->variable_names(), true);
  return c;
}

namespace {
std::string k_cell(const KSuggestion& r) {
  if (r.k < 0) return "-";
  return (r.lower_bound ? ">= " : "") + std::to_string(r.k);
}
}  // namespace

Table rules_table(const std::vector<KSuggestion>& rules) {
  Table t;
  t.columns = {"rule", "k", "meaning"};
  for (const auto& r : rules)
    t.add_row({r.label, k_cell(r), r.meaning + (r.note.empty() ? "" : " [" + r.note + "]")});
  return t;
}

nlohmann::json k_choice_json(const KChoice& c) {
  nlohmann::json j;
  j["rules"] = nlohmann::json::array();
  for (const auto& r : c.rules) {
    j["rules"].push_back({{"rule", r.rule},
                          {"label", r.label},
                          {"k", r.k < 0 ? nlohmann::json(nullptr) : nlohmann::json(r.k)},
                          {"at_least", r.lower_bound},
                          {"meaning", r.meaning},
                          {"note", r.note}});
  }
  j["agreement"] = c.agreement;
  const NearZeroReport& nz = c.near_zero;
  j["near_zero"] = {{"largest_eigenvalue", nz.largest_eigenvalue},
                    {"zero_threshold", nz.zero_threshold},
                    {"noise_floor", nz.noise_floor},
                    {"exact_zero_components", nz.exact_zero},
                    {"below_noise_floor_components", nz.below_floor},
                    {"zeros_forced_by_few_observations", nz.forced_zeros},
                    {"redundancy_found", nz.redundancy_found()},
                    {"constant_variables", nz.constant_variables},
                    {"copy_groups", nz.copy_groups},
                    {"involved_variables", nz.involved_variables},
                    {"findings", nz.findings}};
  if (!c.target_search.suggestion.rule.empty()) {
    nlohmann::json ev = nlohmann::json::array();
    for (const auto& q : c.target_search.evaluated)
      ev.push_back({{"k", q.k}, {"psnr_db", json_real(q.psnr_db)}, {"ssim", json_real(q.ssim)}});
    j["quality_search"] = {{"bracket", {c.target_search.bracket_low, c.target_search.bracket_high}},
                           {"reconstructions", ev}};
  }
  return j;
}

std::string render_k_choice(const KChoice& c) {
  std::string out = "How many components? Each rule's answer:\n" + render_console(rules_table(c.rules), 4);
  out += c.agreement + "\n";
  if (c.near_zero.findings.empty()) {
    out += "Near-zero eigenvalues: none (no exact zeros, none below the rounding noise floor 1/12).\n";
  } else {
    out += "Near-zero eigenvalues:\n";
    for (const auto& f : c.near_zero.findings) out += "  - " + f + "\n";
  }
  return out;
}

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
  // Log axis: exact zeros cannot be drawn; show them at a floor one decade
  // under the smallest positive eigenvalue and say so.
  double floor = std::numeric_limits<double>::quiet_NaN();
  int zeros = 0;
  if (log_scale) {
    double smallest = INFINITY;
    for (Eigen::Index i = 0; i < r; ++i)
      if (basis.eigenvalues(i) > choice.near_zero.zero_threshold) smallest = std::min(smallest, basis.eigenvalues(i));
    floor = std::isfinite(smallest) ? smallest / 10.0 : 1.0;
  }
  auto y_of = [&](Eigen::Index i) {
    const double v = basis.eigenvalues(i);
    if (log_scale && v <= choice.near_zero.zero_threshold) return floor;
    return v;
  };
  ChartSeries ev;
  ev.name = "eigenvalue";
  ev.style.colour = "#000000";
  ev.style.line_width = 1.8;
  if (r <= 120) {
    ev.style.marker = MarkerShape::circle;
    ev.style.marker_size = 2.2;
  }
  for (Eigen::Index i = 0; i < r; ++i) {
    ev.x.push_back(double(i + 1));
    ev.y.push_back(y_of(i));
    if (log_scale && basis.eigenvalues(i) <= choice.near_zero.zero_threshold) ++zeros;
  }
  c.series.push_back(ev);
  // Broken-stick expectation in eigenvalue units, for comparison.
  const std::vector<double> bs = broken_stick_expectations(int(basis.dimension()));
  ChartSeries stick;
  stick.name = "broken-stick expectation";
  stick.style.colour = "#777777";
  stick.style.dash = "3 3";
  stick.style.line_width = 1.4;
  for (Eigen::Index i = 0; i < r && i < Eigen::Index(bs.size()); ++i) {
    stick.x.push_back(double(i + 1));
    stick.y.push_back(bs[std::size_t(i)] * basis.total_variance);
  }
  c.series.push_back(stick);
  int m = 0;
  for (const auto& rule : choice.rules) {
    if (rule.k < 1 || rule.k > r) {
      ++m;
      continue;
    }
    const int idx = rule_colour(m);
    ChartSeries s;
    s.name = rule.label + ": k = " + (rule.lower_bound ? ">= " : "") + std::to_string(rule.k);
    s.style.palette_index = idx;
    s.style.line = false;
    s.style.marker = kRuleMarkers[m % 7];
    s.style.marker_size = 7.5 - 0.5 * (m % 4);
    s.style.hollow = true;
    s.x = {double(rule.k)};
    s.y = {y_of(rule.k - 1)};
    ReferenceLine line;
    line.value = rule.k;
    line.colour = okabe_ito_palette()[std::size_t(idx)];
    line.dash = kRuleDashes[m % 7];
    c.lines.push_back(line);
    c.series.push_back(s);
    ++m;
  }
  ReferenceLine mean;
  mean.vertical = false;
  mean.value = basis.total_variance / double(basis.dimension());
  mean.label = "mean eigenvalue (Kaiser)";
  mean.colour = "#0072B2";
  mean.in_legend = true;
  c.lines.push_back(mean);
  const double gd = gavish_donoho_threshold_eigenvalue(basis);
  if (std::isfinite(gd)) {
    ReferenceLine g;
    g.vertical = false;
    g.value = gd;
    g.label = "Gavish-Donoho threshold";
    g.colour = "#D55E00";
    g.in_legend = true;
    c.lines.push_back(g);
  }
  if (log_scale) {
    ReferenceLine q;
    q.vertical = false;
    q.value = 1.0 / 12.0;
    q.label = "rounding noise 1/12";
    q.colour = "#009E73";
    q.dash = "2 2";
    q.in_legend = true;
    c.lines.push_back(q);
    if (zeros > 0) c.note = std::to_string(zeros) + " exact zero eigenvalue(s) drawn at the bottom (" +
                            tick_label(floor) + "): a log axis cannot show zero.";
  }
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
  int m = 0;
  for (const auto& rule : choice.rules) {
    if (rule.k < 1 || rule.k > cum.size()) {
      ++m;
      continue;
    }
    const int idx = rule_colour(m);
    ChartSeries p;
    p.name = rule.label + ": k = " + (rule.lower_bound ? ">= " : "") + std::to_string(rule.k) + " (" +
             fmt(100.0 * cum(rule.k - 1), 4) + "%)";
    p.style.palette_index = idx;
    p.style.line = false;
    p.style.marker = kRuleMarkers[m % 7];
    p.style.marker_size = 7.5 - 0.5 * (m % 4);
    p.style.hollow = true;
    p.x = {double(rule.k)};
    p.y = {100.0 * cum(rule.k - 1)};
    c.series.push_back(p);
    ReferenceLine v;
    v.value = rule.k;
    v.colour = okabe_ito_palette()[std::size_t(idx)];
    v.dash = kRuleDashes[m % 7];
    c.lines.push_back(v);
    ++m;
  }
  std::string goals;
  for (double f : choice.keep_fractions) goals += (goals.empty() ? "" : ", ") + fmt(100.0 * f, 4) + "%";
  c.note = "Gray dashed lines: " + goals + " of the variance.";
  if (!basis.complete())
    c.note += " Only " + std::to_string(cum.size()) + " of " + std::to_string(basis.dimension()) +
              " components were computed.";
  return c;
}

void write_k_charts(const Basis& basis, const KChoice& choice, bool log_scale, const std::string& source,
                    const std::string& out_dir) {
  std::error_code ec;
  std::filesystem::create_directories(out_dir, ec);
  if (ec) throw data_error(out_dir + ": cannot create output folder: " + ec.message());
  const auto path_in = [&](const std::string& name) { return (std::filesystem::path(out_dir) / name).string(); };
  write_file_atomic(path_in("scree.svg"), render_svg_chart(scree_chart(basis, choice, log_scale, source)));
  write_file_atomic(path_in("cumulative.svg"), render_svg_chart(cumulative_chart(basis, choice, source)));
}

}  // namespace pcasweep
