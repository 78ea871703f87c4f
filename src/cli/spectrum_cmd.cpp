// pcasweep spectrum IMAGE: eigenvalues, proportions and the trace check.
#include <cmath>
#include <iostream>
#include <memory>

#include "cli/command.hpp"
#include "cli/image_options.hpp"
#include "core/error.hpp"

namespace pcasweep::cli {

namespace {
struct SpectrumArgs {
  std::string input;
  int top = 0;
  ImageOptionText image;
};
}  // namespace

Action setup_spectrum(CLI::App& sub) {
  auto args = std::make_shared<SpectrumArgs>();
  sub.add_option("IMAGE", args->input, "Image to analyse (PNG, JPEG, BMP, TGA, PNM; 8 or 16 bit)")->required();
  sub.add_option("--top", args->top, "Print only the first N components (default: all d)")
      ->check(CLI::NonNegativeNumber);
  add_image_options(sub, args->image);
  return [args]() {
    const ImageAnalysis a = analyze_image(args->input, image_settings(args->image));
    Table table = spectrum_table(a.basis);
    if (args->top > 0 && std::size_t(args->top) < table.rows.size()) table.rows.resize(std::size_t(args->top));
    const double sum = a.basis.eigenvalues.sum();
    const double trace = a.basis.total_variance;
    const double rel = trace > 0 ? std::abs(sum - trace) / trace : std::abs(sum - trace);
    std::cout << args->input << ": " << a.layout->describe() << "; N = " << a.X.rows() << " observations, d = "
              << a.X.cols() << " variables; solver: " << a.basis.solver << " (" << a.basis.solver_reason << ")\n"
              << "eigenvalues are variances of the sample covariance (divide by N-1), in sample units squared\n"
              << render_console(table, 6) << "total variance (trace of the covariance) = " << format_real(trace)
              << "\nsum of eigenvalues                      = " << format_real(sum)
              << "\nrelative difference = " << format_real(rel, 3)
              << (rel <= 1e-9 ? "  (agree: the eigenvalues share out the total variance)"
                              : "  (DISAGREE beyond 1e-9: the solve lost accuracy)")
              << "\n";
    return rel <= 1e-9 ? 0 : 1;
  };
}

}  // namespace pcasweep::cli
