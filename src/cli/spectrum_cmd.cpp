// pcasweep spectrum IMAGE: eigenvalues, proportions and the trace check.
#include <cmath>
#include <iostream>
#include <memory>

#include "cli/command.hpp"
#include "cli/image_options.hpp"
#include "cli/k_options.hpp"
#include "cli/signal_options.hpp"
#include "core/error.hpp"
#include "pipeline/image_set.hpp"
#include "present/component_images.hpp"
#include "present/k_charts.hpp"
#include "present/k_rules.hpp"
#include "io/atomic_file.hpp"

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
    const ImageAnalysis a = analyze_image_files(paths, image_settings(args->image),
                                                args->top > 0 ? std::vector<int>{args->top} : std::vector<int>{});
    Table table = spectrum_table(a.basis);
    if (args->top > 0 && std::size_t(args->top) < table.rows.size()) table.rows.resize(std::size_t(args->top));
    const double sum = a.basis.eigenvalues.sum();
    const double trace = a.basis.total_variance;
    const double rel = trace > 0 ? std::abs(sum - trace) / trace : std::abs(sum - trace);
    std::cout << args->input << (paths.size() > 1 ? " and " + std::to_string(paths.size() - 1) + " more" : "")
              << ": " << a.layout->describe() << "; N = " << a.observations() << " observations, d = " << a.dimension()
              << " variables\n"
              << solver_lines(a.basis, a.solve_report) << "eigenvalues are variances of the sample covariance (divide by N-1), in sample units squared\n"
              << render_console(table, 6) << "total variance (trace of the covariance) = " << format_real(trace);
    if (a.basis.complete()) {
      std::cout << "\nsum of eigenvalues                      = " << format_real(sum)
                << "\nrelative difference = " << format_real(rel, 3)
                << (rel <= 1e-9 ? "  (agree: the eigenvalues share out the total variance)"
                                : "  (DISAGREE beyond 1e-9: the solve lost accuracy)")
                << "\n";
    } else {
      std::cout << "\nsum of the " << a.basis.rank() << " computed eigenvalues     = " << format_real(sum)
                << "\n(the remaining " << format_real(trace - sum) << " lies beyond the computed rank)\n";
    }
    const KChoice choice = choose_k(a, k_options);
    std::cout << render_k_choice(choice);
    if (!args->out.empty()) {
      write_k_charts(a.basis, choice, args->krules.log_scale, args->input, args->out);
      nlohmann::json rules = k_choice_json(choice);
      rules["settings"] = k_settings_json(k_options, args->krules.log_scale);
      write_file_atomic(args->out + "/rules.json", rules.dump(2) + "\n");
      const int components_written = write_component_images(OutputFolder(args->out), a.basis.components,
                                                            a.layout->observation_shape());
      std::cout << "wrote " << args->out << "/scree.svg, cumulative.svg, rules.json"
                << (components_written > 0 ? ", components/ (" + std::to_string(components_written) + " images)"
                                           : std::string())
                << "\n";
    }
    return (!a.basis.complete() || rel <= 1e-9) ? 0 : 1;
  };
}

}  // namespace pcasweep::cli
