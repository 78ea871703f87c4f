// pcasweep spectrum IMAGE: eigenvalues, proportions and the trace check.
#include <cmath>
#include <iostream>
#include <memory>
#include <sstream>

#include "cli/command.hpp"
#include "cli/image_options.hpp"
#include "cli/k_options.hpp"
#include "cli/signal_options.hpp"
#include "core/error.hpp"
#include "pipeline/spectrum_study.hpp"
#include "present/k_rules.hpp"
#include "present/sweep_outputs.hpp"
#include "present/sweep_tables.hpp"

namespace pcasweep::cli {

namespace {
struct SpectrumArgs {
  std::string input;
  std::vector<std::string> more;  // further images for --layout whole/bands
  int top = 0;
  ImageOptionText image;
  KOptionText krules;
  std::string out;
};

// The spectrum, the trace check and the rules for k, as the console shows them.
std::string spectrum_text(const SpectrumArgs& args, std::size_t files, const SpectrumStudy& study) {
  const ImageAnalysis& a = study.analysis;
  const TraceCheck& t = study.trace;
  Table table = spectrum_table(a.basis);
  if (args.top > 0 && std::size_t(args.top) < table.rows.size()) table.rows.resize(std::size_t(args.top));
  std::ostringstream o;
  o << args.input << (files > 1 ? " and " + std::to_string(files - 1) + " more" : "") << ": " << a.layout->describe()
    << "; N = " << a.observations() << " observations, d = " << a.dimension() << " variables\n"
    << solver_lines(a.basis, a.solve_report)
    << "eigenvalues are variances of the sample covariance (divide by N-1), in sample units squared\n"
    << render_console(table, 6) << "total variance (trace of the covariance) = " << format_real(t.trace);
  if (a.basis.complete()) {
    o << "\nsum of eigenvalues                      = " << format_real(t.sum)
      << "\nrelative difference = " << format_real(t.relative_difference, 3)
      << (t.agrees() ? "  (agree: the eigenvalues share out the total variance)"
                     : "  (DISAGREE beyond 1e-9: the solve lost accuracy)")
      << "\n";
  } else {
    o << "\nsum of the " << a.basis.rank() << " computed eigenvalues     = " << format_real(t.sum)
      << "\n(the remaining " << format_real(t.trace - t.sum) << " lies beyond the computed rank)\n";
  }
  o << render_k_choice(study.choice);
  return o.str();
}

}  // namespace

Action setup_spectrum(CLI::App& sub) {
  auto args = std::make_shared<SpectrumArgs>();
  add_input_arguments(sub, args->input, args->more);
  sub.add_option("--top", args->top,
                 "Print only the first N components (default: all computed; with the randomized solver N is "
                 "also the default --rank)")
      ->check(CLI::NonNegativeNumber);
  add_image_options(sub, args->image);
  add_k_options(sub, args->krules);
  sub.add_option("--out,-o", args->out,
                 "Also write scree.svg, cumulative.svg and rules.json (the k rules) into this folder");
  auto signal = std::make_shared<SignalOptionText>();
  add_signal_options(sub, *signal);  // after the image options: reuses their --layout if any
  return [args, signal, app = &sub]() {
    if (signal_input_requested(*app, *signal, args->input))
      return run_signal_spectrum(args->input, args->top, signal_settings(*signal, app));
    const KChoiceSettings k_options = k_settings(args->krules);
    std::vector<std::string> paths{args->input};
    paths.insert(paths.end(), args->more.begin(), args->more.end());
    const SpectrumStudy study = study_spectrum(paths, image_settings(args->image), args->top, k_options);
    std::cout << spectrum_text(*args, paths.size(), study);
    if (!args->out.empty()) {
      nlohmann::json rules = k_choice_json(study.choice);
      rules["settings"] = k_settings_json(k_options, args->krules.log_scale);
      const int components = write_spectrum_files(study.analysis, study.choice, rules, args->krules.log_scale,
                                                  OutputFolder(args->out));
      std::cout << "wrote " << args->out << "/scree.svg, cumulative.svg, rules.json"
                << (components > 0 ? ", components/ (" + std::to_string(components) + " images)" : std::string())
                << "\n";
    }
    return (!study.analysis.basis.complete() || study.trace.agrees()) ? 0 : 1;
  };
}

}  // namespace pcasweep::cli
