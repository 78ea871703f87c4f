// pcasweep-bench — timings behind docs/performance.md (not part of the tests).
//
// Contract: each mode prints one JSON object per line on stdout, so the
// comparison script (scripts/bench) can read it. Modes:
//   solve MATRIX.npy --k K [--solver exact|randomized] [--p P] [--q Q]
//         [--tol T] [--precision double|single] [--seed S] [--repeat R]
//         [--components OUT.npy]
//       times building the operator and solve() on the N×d float64 matrix
//       (median of R runs) and, with --components, writes the d×k components
//       as float64 .npy. With --precision single the matrix is read as
//       float32 (the data is then float32: peak RSS is it plus the solver's
//       working space) and every run builds a SingleOperator over it.
//   gemm --n N --d D --l L [--repeat R]
//       rates of the two tall-skinny products of the randomized solver
//       (N×d by d×l and its transpose product), double and float.
//   orth --m M --l L [--repeat R]
//       CholeskyQR2 against Householder QR on an m×l Gaussian block.
//   crossover [--repeat R]
//       exact against randomized (k = 32, default settings) over a grid of shapes.
//   entropy IMAGE... [--qualities 40,60,75,90] [--methods pca,dct]
//       whole coded-file sizes, zstd stage against the adaptive range coder
//       (bench/entropy_bench.cpp, docs/codec.md).
//   ssim [--width 6000] [--height 4000] [--channels 3] [--bits 8,16] [--threads 1,2]
//        [--repeat 3] [--band 0]
//       SSIM and MSE cost, former whole-image code against the accumulators
//       (bench/ssim_bench.cpp, docs/performance.md "SSIM cost").
//   png [--width W] [--height H] [--images photo8,photo16,blocky8] [--only S] [--repeat R] [--out DIR]
//       PNG writers compared on generated photo-like images (bench/png_bench.cpp, docs/performance.md).
// Peak RSS is reported by every mode (from /proc/self/status, VmHWM).
#include <Eigen/Dense>
#include <algorithm>
#include <chrono>
#include <cstdio>
#include <cstring>
#include <fstream>
#include <iostream>
#include <map>
#include <nlohmann/json.hpp>
#include <omp.h>
#include <sstream>
#include <string>
#include <vector>

#include "core/error.hpp"
#include "solve/operator.hpp"
#include "solve/randomized.hpp"
#include "solve/solver.hpp"

using namespace pcasweep;
using Clock = std::chrono::steady_clock;

namespace pcasweep::bench {
// bench/entropy_bench.cpp: zstd against the adaptive range coder, whole-file sizes.
int mode_entropy(const std::vector<std::string>& images, const std::string& qualities, const std::string& methods);
// bench/ssim_bench.cpp: SSIM and MSE cost, former code against the accumulators.
int mode_ssim(int width, int height, int channels, const std::string& bits, const std::string& threads, int repeat,
              int band);
// bench/png_bench.cpp: PNG writers, speed, size and peak RSS.
int mode_png(const std::map<std::string, std::string>& named);
}  // namespace pcasweep::bench

namespace {

long peak_rss_kb() {
  std::ifstream in("/proc/self/status");
  std::string line;
  while (std::getline(in, line))
    if (line.rfind("VmHWM:", 0) == 0) return std::stol(line.substr(6));
  return -1;
}

double median(std::vector<double> v) {
  std::sort(v.begin(), v.end());
  const std::size_t m = v.size() / 2;
  return v.size() % 2 ? v[m] : 0.5 * (v[m - 1] + v[m]);
}

template <class F>
std::vector<double> time_runs(int repeat, F&& f) {
  std::vector<double> t;
  for (int i = 0; i < repeat; ++i) {
    const auto start = Clock::now();
    f();
    t.push_back(std::chrono::duration<double>(Clock::now() - start).count());
  }
  return t;
}

// Minimal .npy (format 1.0/2.0) reader for little-endian float64 2-D arrays,
// returned as Scalar (float64 → float32 rounds to nearest).
template <class Scalar>
Eigen::Matrix<Scalar, Eigen::Dynamic, Eigen::Dynamic> read_npy(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) throw data_error(path + ": cannot open");
  char magic[8];
  in.read(magic, 8);
  if (std::memcmp(magic, "\x93NUMPY", 6) != 0) throw data_error(path + ": not a .npy file");
  std::uint32_t header_len = 0;
  if (magic[6] == 1) {
    unsigned char b[2];
    in.read(reinterpret_cast<char*>(b), 2);
    header_len = b[0] | (b[1] << 8);
  } else {
    unsigned char b[4];
    in.read(reinterpret_cast<char*>(b), 4);
    header_len = b[0] | (b[1] << 8) | (b[2] << 16) | (std::uint32_t(b[3]) << 24);
  }
  std::string header(header_len, '\0');
  in.read(header.data(), header_len);
  if (header.find("'<f8'") == std::string::npos) throw data_error(path + ": only float64 little-endian is read");
  const bool fortran = header.find("'fortran_order': True") != std::string::npos;
  const auto open = header.find('(', header.find("'shape'"));
  long rows = 0, cols = 0;
  if (std::sscanf(header.c_str() + open, "(%ld, %ld)", &rows, &cols) != 2) throw data_error(path + ": not 2-D");
  // Column-major files (what scripts/bench writes) are read straight into the
  // matrix, a column at a time, so peak RSS is the data plus what the solver
  // adds, not two copies.
  Eigen::Matrix<Scalar, Eigen::Dynamic, Eigen::Dynamic> m(fortran ? rows : cols, fortran ? cols : rows);
  Eigen::VectorXd column(m.rows());
  for (Eigen::Index j = 0; j < m.cols(); ++j) {
    in.read(reinterpret_cast<char*>(column.data()), std::streamsize(column.size() * sizeof(double)));
    if (!in) throw data_error(path + ": truncated");
    m.col(j) = column.cast<Scalar>();
  }
  if (!fortran) m.transposeInPlace();
  return m;
}

void write_npy(const std::string& path, const Eigen::MatrixXd& m) {
  std::string header = "{'descr': '<f8', 'fortran_order': True, 'shape': (" + std::to_string(m.rows()) + ", " +
                       std::to_string(m.cols()) + "), }";
  while ((10 + header.size() + 1) % 64 != 0) header += ' ';
  header += '\n';
  std::ofstream out(path, std::ios::binary);
  out.write("\x93NUMPY\x01\x00", 8);
  const std::uint16_t len = std::uint16_t(header.size());
  out.put(char(len & 0xff));
  out.put(char(len >> 8));
  out << header;
  out.write(reinterpret_cast<const char*>(m.data()), std::streamsize(m.size() * sizeof(double)));
}

struct Args {
  std::vector<std::string> positional;
  std::map<std::string, std::string> named;
  std::string get(const std::string& k, const std::string& def) const {
    auto it = named.find(k);
    return it == named.end() ? def : it->second;
  }
};

Args parse(int argc, char** argv) {
  Args a;
  for (int i = 2; i < argc; ++i) {
    std::string s = argv[i];
    if (s.rfind("--", 0) == 0 && i + 1 < argc) a.named[s.substr(2)] = argv[++i];
    else a.positional.push_back(s);
  }
  return a;
}

nlohmann::json environment() {
  nlohmann::json j;
  j["threads"] = omp_get_max_threads();
#ifdef EIGEN_USE_BLAS
  j["gemm"] = "openblas";
#else
  j["gemm"] = "eigen";
#endif
  return j;
}

int mode_solve(const Args& a) {
  if (a.positional.empty()) throw usage_error("solve: give MATRIX.npy");
  const Precision precision = parse_precision(a.get("precision", "double"));
  const bool single = precision == Precision::single_precision;
  const Eigen::MatrixXd X = single ? Eigen::MatrixXd() : read_npy<double>(a.positional[0]);
  const Eigen::MatrixXf xf = single ? read_npy<float>(a.positional[0]) : Eigen::MatrixXf();
  const Eigen::Index rows = single ? xf.rows() : X.rows(), cols = single ? xf.cols() : X.cols();
  SolverSettings s;
  s.choice = parse_solver_choice(a.get("solver", "randomized"));
  s.rank = std::stol(a.get("k", "16"));
  s.oversample = std::stoi(a.get("p", "10"));
  s.power_iterations = std::stoi(a.get("q", "-1"));
  s.seed = std::stoull(a.get("seed", "1"));
  s.tolerance = std::stod(a.get("tol", "0"));
  const int repeat = std::stoi(a.get("repeat", "5"));
  Solution solution;
  double unit_roundoff = kDoubleRoundoff;
  const auto times = time_runs(repeat, [&] {
    if (single) {
      SingleOperator op(xf);
      solution = solve(op, s);
      unit_roundoff = op.unit_roundoff();
    } else {
      DenseOperator op(X);
      solution = solve(op, s);
    }
  });
  const Basis& basis = solution.basis;
  const SolveReport& report = solution.report;
  if (a.named.count("components")) write_npy(a.named.at("components"), basis.components.leftCols(s.rank));
  nlohmann::json j = environment();
  const double l = double(report.sample_size);
  j["mode"] = "solve";
  j["rows"] = rows;
  j["cols"] = cols;
  j["precision"] = single ? "single" : "double";
  j["k"] = s.rank;
  j["solver"] = report.solver;
  j["reason"] = report.reason;
  j["seconds"] = times;
  j["seconds_median"] = median(times);
  j["passes"] = report.passes;
  j["sample_size"] = report.sample_size;
  j["converged"] = report.converged;
  // Whether float32 rounding leaves the rank-k error near optimal; solve(X)
  // (the CLI) would re-solve in double when it does not.
  j["precision_suffices"] = precision_suffices(basis, unit_roundoff);
  j["last_relative_change"] = report.last_relative_change;
  j["product_flops"] = report.solver == "randomized" ? report.passes * 2.0 * double(rows) * double(cols) * l
                                                    : double(rows) * double(cols) * double(cols);
  j["eigenvalues"] = std::vector<double>(basis.eigenvalues.data(), basis.eigenvalues.data() + basis.eigenvalues.size());
  j["total_variance"] = basis.total_variance;
  j["subspace_residual"] = report.subspace_residual;
  j["optimality_gap_estimate"] = std::isfinite(report.optimality_gap_estimate) ? nlohmann::json(report.optimality_gap_estimate) : nlohmann::json();
  j["peak_rss_kb"] = peak_rss_kb();
  std::cout << j.dump() << std::endl;
  return 0;
}

template <class Scalar>
nlohmann::json gemm_rates(Eigen::Index n, Eigen::Index d, Eigen::Index l, int repeat) {
  using M = Eigen::Matrix<Scalar, Eigen::Dynamic, Eigen::Dynamic>;
  const M A = gaussian_matrix(n, d, 7).cast<Scalar>();
  const M omega = gaussian_matrix(d, l, 8).cast<Scalar>();
  const M y0 = gaussian_matrix(n, l, 9).cast<Scalar>();
  M y(n, l), z(d, l);
  const auto t1 = time_runs(repeat, [&] { y.noalias() = A * omega; });
  const auto t2 = time_runs(repeat, [&] { z.noalias() = A.transpose() * y0; });
  const double flops = 2.0 * double(n) * double(d) * double(l);
  return {{"a_times_omega_gflops", flops / median(t1) / 1e9},
          {"at_times_y_gflops", flops / median(t2) / 1e9},
          {"a_times_omega_seconds", median(t1)},
          {"at_times_y_seconds", median(t2)}};
}

int mode_gemm(const Args& a) {
  const Eigen::Index n = std::stol(a.get("n", "20000")), d = std::stol(a.get("d", "1024")),
                     l = std::stol(a.get("l", "74"));
  const int repeat = std::stoi(a.get("repeat", "5"));
  nlohmann::json j = environment();
  j["mode"] = "gemm";
  j["n"] = n;
  j["d"] = d;
  j["l"] = l;
  j["double"] = gemm_rates<double>(n, d, l, repeat);
  j["float"] = gemm_rates<float>(n, d, l, repeat);
  j["peak_rss_kb"] = peak_rss_kb();
  std::cout << j.dump() << std::endl;
  return 0;
}

int mode_orth(const Args& a) {
  const Eigen::Index m = std::stol(a.get("m", "20000")), l = std::stol(a.get("l", "74"));
  const int repeat = std::stoi(a.get("repeat", "5"));
  const Eigen::MatrixXd g = gaussian_matrix(m, l, 3);
  Eigen::MatrixXd q;
  bool hh = false;
  const auto tc = time_runs(repeat, [&] { q = g; orthonormalize(q, &hh); });
  const double ortho_c = (q.transpose() * q - Eigen::MatrixXd::Identity(l, l)).norm();
  const auto th = time_runs(repeat, [&] { q = g; orthonormalize_householder(q); });
  const double ortho_h = (q.transpose() * q - Eigen::MatrixXd::Identity(l, l)).norm();
  nlohmann::json j = environment();
  j["mode"] = "orth";
  j["m"] = m;
  j["l"] = l;
  j["cholesky_qr2_seconds"] = median(tc);
  j["cholesky_qr2_fell_back"] = hh;
  j["cholesky_qr2_orthogonality"] = ortho_c;
  j["householder_seconds"] = median(th);
  j["householder_orthogonality"] = ortho_h;
  std::cout << j.dump() << std::endl;
  return 0;
}

int mode_crossover(const Args& a) {
  const int repeat = std::stoi(a.get("repeat", "3"));
  const Eigen::Index k = std::stol(a.get("k", "32"));
  for (Eigen::Index d : {256, 512, 1024, 2048}) {
    for (Eigen::Index n : {2000, 20000}) {
      // Decaying spectrum: σ_i = exp(−i/20) on random orthonormal factors.
      Eigen::MatrixXd X = gaussian_matrix(n, d, 11 + d + n);
      const Eigen::VectorXd scale = (-Eigen::VectorXd::LinSpaced(d, 0, double(d - 1)) / 20.0).array().exp();
      X = X * scale.asDiagonal();
      DenseOperator op(X);
      SolverSettings se, sr;
      se.choice = SolverChoice::exact;
      sr.choice = SolverChoice::randomized;
      sr.rank = k;
      const auto te = time_runs(repeat, [&] { solve(op, se); });
      Solution b;
      const auto tr = time_runs(repeat, [&] { b = solve(op, sr); });
      const CostEstimate c = estimate_costs(n, d, k, 10);
      nlohmann::json j = environment();
      j["mode"] = "crossover";
      j["n"] = n;
      j["d"] = d;
      j["k"] = k;
      j["exact_seconds"] = median(te);
      j["randomized_seconds"] = median(tr);
      j["randomized_passes"] = b.report.passes;
      j["predicted_exact_seconds"] = c.exact_seconds;
      j["predicted_randomized_seconds"] = c.randomized_seconds;
      std::cout << j.dump() << std::endl;
    }
  }
  return 0;
}

}  // namespace

int main(int argc, char** argv) {
  if (argc < 2) {
    std::cerr << "usage: pcasweep-bench solve|gemm|orth|crossover|entropy|png [options] (see bench/bench_main.cpp)\n";
    return 2;
  }
  try {
    const std::string mode = argv[1];
    const Args a = parse(argc, argv);
    if (mode == "solve") return mode_solve(a);
    if (mode == "gemm") return mode_gemm(a);
    if (mode == "orth") return mode_orth(a);
    if (mode == "crossover") return mode_crossover(a);
    if (mode == "png") return pcasweep::bench::mode_png(a.named);
    if (mode == "entropy")
      return pcasweep::bench::mode_entropy(a.positional, a.get("qualities", "40,60,75,90"), a.get("methods", "pca,dct"));
    if (mode == "ssim")
      return pcasweep::bench::mode_ssim(std::stoi(a.get("width", "6000")), std::stoi(a.get("height", "4000")),
                                        std::stoi(a.get("channels", "3")), a.get("bits", "8,16"),
                                        a.get("threads", "1,2"), std::stoi(a.get("repeat", "3")),
                                        std::stoi(a.get("band", "0")));
    std::cerr << "pcasweep-bench: unknown mode " << mode << "\n";
    return 2;
  } catch (const Error& e) {
    std::cerr << "pcasweep-bench: " << e.what() << "\n";
    return e.exit_code();
  }
}
