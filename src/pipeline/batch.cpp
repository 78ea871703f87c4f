#include "pipeline/batch.hpp"

#include <Eigen/Core>
#include <algorithm>
#include <atomic>
#include <chrono>
#include <cmath>
#include <filesystem>
#include <map>
#include <mutex>
#include <random>
#include <set>
#include <thread>

#ifdef _OPENMP
#include <omp.h>
#endif

#include "core/error.hpp"
#include "pipeline/batch_detail.hpp"
#include "observe/patch_blocks.hpp"
#include "solve/blocked_operator.hpp"
#include "solve/exact.hpp"
#include "solve/scatter_sum.hpp"

namespace pcasweep {

namespace fs = std::filesystem;

namespace detail {

std::vector<int> file_ks(const std::vector<int>& requested, Eigen::Index rank) {
  std::vector<int> base = requested.empty() ? default_ks(rank) : requested;
  std::set<int> out;
  for (int k : base) out.insert(int(std::min<Eigen::Index>(k, rank)));
  return {out.begin(), out.end()};
}

ImageAnalysis observe_file(const std::string& path, const ImageStudySettings& settings) {
  Image image = read_image(path, read_options(settings));
  auto layout = std::make_unique<PatchLayout>(image, settings.patch, path);
  ImageAnalysis a;
  a.inputs = {path};
  a.alpha_dropped = image.alpha_dropped;
  a.sources.push_back(std::move(image));
  a.layout = std::move(layout);
  return a;  // streamed: the patches are cut band by band when they are used
}

void check_against_shared(const ImageAnalysis& a, const SharedBasisInfo& shared, int bit_depth,
                          const std::string& path) {
  if (a.dimension() != shared.dimension) {
    throw data_error(path + ": " + std::to_string(a.dimension()) + " variables per patch (" +
                     std::to_string(a.image().channels) + " channel(s)), the shared basis has " +
                     std::to_string(shared.dimension));
  }
  if (a.image().bit_depth != bit_depth) {
    throw data_error(path + ": " + std::to_string(a.image().bit_depth) + "-bit, the shared basis was learned from " +
                     std::to_string(bit_depth) + "-bit files");
  }
}

int column_index(const Table& t, const std::string& name) {
  for (std::size_t i = 0; i < t.columns.size(); ++i)
    if (t.columns[i] == name) return int(i);
  return -1;
}

double cell_number(const Cell& c) {
  if (const double* d = std::get_if<double>(&c)) return *d;
  if (const std::int64_t* i = std::get_if<std::int64_t>(&c)) return double(*i);
  return std::numeric_limits<double>::quiet_NaN();
}

const std::vector<Cell>* row_at(const FileResult& f, int k) {
  const int kc = column_index(f.sweep, "k");
  if (kc < 0 || f.sweep.rows.empty()) return nullptr;
  const std::vector<Cell>* best = nullptr;
  int best_k = 0;
  for (const auto& row : f.sweep.rows) {
    const int rk = int(cell_number(row[kc]));
    if (rk == k) return &row;
    if (rk > best_k) {
      best_k = rk;
      best = &row;
    }
  }
  // k beyond the file's largest k (its rank): the file is kept whole there.
  return k > best_k ? best : nullptr;
}

double value_at(const FileResult& f, int k, const std::string& column) {
  const int c = column_index(f.sweep, column);
  if (c < 0) return std::numeric_limits<double>::quiet_NaN();
  const auto* row = row_at(f, k);
  return row ? cell_number((*row)[c]) : std::numeric_limits<double>::quiet_NaN();
}

double stored_at(const FileResult& f, int k) {
  return value_at(f, k, kStoredColumn);
}

FileQuality quality_at(const FileResult& f, int k) {
  return {value_at(f, k, "psnr_db"), value_at(f, k, kSsimColumn)};
}

}  // namespace detail

using namespace detail;

namespace {

std::vector<std::size_t> draw_training(std::size_t n, double fraction, std::uint64_t seed) {
  std::size_t count = std::size_t(std::llround(fraction * double(n)));
  count = std::max<std::size_t>(count, 1);
  if (n >= 2) count = std::min(count, n - 1);
  std::vector<std::size_t> order(n);
  for (std::size_t i = 0; i < n; ++i) order[i] = i;
  // Fisher–Yates with our own bounded draws (std::shuffle's algorithm is not
  // fixed by the standard, so it would not be reproducible across libraries).
  std::mt19937_64 rng(seed);
  for (std::size_t i = n; i > 1; --i) {
    const std::size_t j = std::size_t(rng() % i);
    std::swap(order[i - 1], order[j]);
  }
  order.resize(std::min(count, n));
  std::sort(order.begin(), order.end());
  return order;
}

std::string canonical_key(const std::string& p) {
  std::error_code ec;
  const fs::path c = fs::weakly_canonical(p, ec);
  return ec ? p : c.string();
}

std::string error_text(const std::exception_ptr& ep, const std::string& path) {
  try {
    std::rethrow_exception(ep);
  } catch (const Error& e) {
    std::string m = e.what();  // reasons are listed beside the file, so drop a leading "path: "
    return m.rfind(path + ": ", 0) == 0 ? m.substr(path.size() + 2) : m;
  } catch (const std::bad_alloc&) {
    return "out of memory";
  } catch (const std::exception& e) {
    return e.what();
  }
}

}  // namespace

BatchResult run_batch(const CollectedInputs& inputs, const BatchSettings& settings, const BatchProgressFn& progress) {
  if (settings.threads < 1) throw usage_error("--threads must be at least 1");
  if (!(settings.target.coverage > 0.0 && settings.target.coverage <= 1.0))
    throw usage_error("--coverage must be a share in (0, 1] or a percentage in (0, 100]");
  if (settings.basis == BasisMode::shared && settings.train_files.empty() &&
      !(settings.train_fraction > 0.0 && settings.train_fraction <= 1.0))
    throw usage_error("--train-fraction must be in (0, 1]");
  if (settings.coding.enabled && settings.basis == BasisMode::shared)
    throw usage_error("--quality (coded bytes) works with --basis per-file only: the codec embeds each file's own basis");
  const auto start = std::chrono::steady_clock::now();
  BatchResult result;
  result.inputs = inputs;
  const std::size_t n = inputs.files.size();
  result.files.resize(n);
  for (std::size_t i = 0; i < n; ++i) result.files[i].path = inputs.files[i];
  if (n == 0 && inputs.failed.empty()) throw data_error("no image files among the inputs");

  std::mutex mutex;
  BatchProgress state;

  // Shared basis: accumulate the training files' scatter, one file at a time.
  int shared_bit_depth = 0;
  if (settings.basis == BasisMode::shared && n > 0) {
    SharedBasisInfo shared;
    std::vector<std::string> training_paths;
    std::vector<std::size_t> training_index;  // into files, or n for an extra file
    if (!settings.train_files.empty()) {
      CollectOptions co;
      co.supported = has_image_extension;
      const CollectedInputs train = collect_inputs(settings.train_files, co);
      for (const auto& f : train.failed) result.failures.push_back({f.path, "--train: " + f.reason});
      std::map<std::string, std::size_t> index;
      for (std::size_t i = 0; i < n; ++i) index.emplace(canonical_key(inputs.files[i]), i);
      for (const auto& p : train.files) {
        const auto it = index.find(canonical_key(p));
        training_paths.push_back(p);
        training_index.push_back(it == index.end() ? n : it->second);
        if (it == index.end()) shared.training_extra.push_back(p);
      }
      if (training_paths.empty()) throw usage_error("--train: no image files among the training inputs");
    } else {
      for (std::size_t i : draw_training(n, settings.train_fraction, settings.seed)) {
        training_paths.push_back(inputs.files[i]);
        training_index.push_back(i);
      }
    }
    std::unique_ptr<ScatterSum> sum;
    state.phase = "training";
    state.total = training_paths.size();
    for (std::size_t t = 0; t < training_paths.size(); ++t) {
      const std::string& path = training_paths[t];
      try {
        ImageAnalysis a = observe_file(path, settings.image);
        if (!sum) {
          sum = std::make_unique<ScatterSum>(a.dimension());
          shared.dimension = a.dimension();
          shared_bit_depth = a.image().bit_depth;
        }
        check_against_shared(a, shared, shared_bit_depth, path);
        const PatchBlocks blocks(*a.patches(), a.image());
        const BlockedOperator<double> op(blocks);
        sum->add(op);
        shared.training_files.push_back(path);
        if (training_index[t] < n) result.files[training_index[t]].training = true;
      } catch (...) {
        const std::string why = error_text(std::current_exception(), path);
        if (training_index[t] < n) {
          result.files[training_index[t]].error = why;  // reported once, in the sweep below
        } else {
          result.failures.push_back({path, why});
          ++state.failed;
        }
      }
      ++state.done;
      state.last = path;
      if (progress) progress(state);
    }
    if (!sum || sum->rows() < 2) throw data_error("shared basis: no readable training file with at least 2 patches");
    shared.observations = sum->rows();
    shared.basis = solve_exact(*sum);
    shared.basis.solver_reason = "shared basis: exact solver on the scatter accumulated over " +
                                 std::to_string(sum->blocks()) + " training file(s)";
    result.shared = std::move(shared);
  }

  // The sweep: `workers` files at a time, each file's linear algebra on one
  // thread. Measured (docs/batch.md): with OpenMP inside each file instead,
  // a 24-file batch took 6x longer on the 2-core reference machine, the
  // threads spinning at every small parallel region; so the files are the
  // unit of parallelism even with --threads 1.
  const int workers = int(std::min<std::size_t>(std::size_t(settings.threads), std::max<std::size_t>(n, 1)));
  result.threads_used = workers;
  result.parallel_mode = "files";
  const SerialLinearAlgebra serial(false);  // the worker threads set their own OpenMP teams below
  state.phase = "sweep";
  state.done = 0;
  state.total = n;
  state.failed = 0;
  std::atomic<std::size_t> next{0};
  auto work = [&]() {
#ifdef _OPENMP
    omp_set_num_threads(1);
#endif
    for (std::size_t i; (i = next.fetch_add(1)) < n;) {
      FileResult& f = result.files[i];
      const auto t0 = std::chrono::steady_clock::now();
      if (f.error.empty()) {
        try {
          ImageAnalysis a;
          if (result.shared) {
            a = observe_file(f.path, settings.image);
            check_against_shared(a, *result.shared, shared_bit_depth, f.path);
            a.basis = result.shared->basis;
          } else {
            a = analyze_image(f.path, settings.image);
          }
          const std::vector<int> ks = file_ks(settings.ks, a.basis.rank());
          std::vector<SweepRow> rows = sweep_ks(a, ks, {}, result.shared ? SweepCoding{} : settings.coding);
          if (result.shared) {
            const double raw = double(a.image().sample_count());
            for (auto& r : rows) {
              r.stored_values = std::int64_t(a.observations()) * r.k;
              r.ratio = double(r.stored_values) / raw;
            }
          }
          f.sweep = sweep_table(rows, a.image().channel_names);
          f.width = a.image().width;
          f.height = a.image().height;
          f.channels = a.image().channels;
          f.bit_depth = a.image().bit_depth;
          f.observations = a.observations();
          f.dimension = a.dimension();
          f.rank = a.basis.rank();
          f.ok = true;
        } catch (...) {
          f.error = error_text(std::current_exception(), f.path);
        }
      }
      f.seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - t0).count();
      std::lock_guard<std::mutex> lock(mutex);
      ++state.done;
      if (!f.ok) ++state.failed;
      state.last = f.path;
      if (progress) progress(state);
    }
  };
  {
    std::vector<std::thread> pool;
    for (int w = 0; w < workers; ++w) pool.emplace_back(work);
    for (auto& t : pool) t.join();
  }
  for (const auto& f : inputs.failed) result.failures.push_back(f);
  for (const auto& f : result.files)
    if (!f.ok) result.failures.push_back({f.path, f.error});
  result.seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
  return result;
}

std::vector<int> batch_ks(const BatchResult& result) {
  std::set<int> ks;
  for (const auto& f : result.files) {
    if (!f.ok) continue;
    const int kc = column_index(f.sweep, "k");
    for (const auto& row : f.sweep.rows) ks.insert(int(cell_number(row[kc])));
  }
  return {ks.begin(), ks.end()};
}

Table batch_table(const BatchResult& result) {
  std::vector<std::string> columns;
  for (const auto& f : result.files)
    if (f.ok)
      for (const auto& c : f.sweep.columns)
        if (std::find(columns.begin(), columns.end(), c) == columns.end()) columns.push_back(c);
  Table t;
  t.columns = {"file"};
  if (result.shared) t.columns.push_back("subset");
  t.columns.insert(t.columns.end(), columns.begin(), columns.end());
  for (const auto& f : result.files) {
    if (!f.ok) continue;
    std::vector<int> where;
    for (const auto& c : columns) where.push_back(column_index(f.sweep, c));
    for (const auto& row : f.sweep.rows) {
      std::vector<Cell> cells = {f.path};
      if (result.shared) cells.push_back(std::string(f.training ? "training" : "held_out"));
      for (int w : where) cells.push_back(w < 0 ? Cell{} : row[w]);
      t.add_row(std::move(cells));
    }
  }
  return t;
}

namespace {
// True if some file has a number (not an empty cell) in column `name`.
bool any_column(const BatchResult& r, const std::string& name) {
  for (const auto& f : r.files) {
    const int c = f.ok ? column_index(f.sweep, name) : -1;
    if (c < 0) continue;
    for (const auto& row : f.sweep.rows)
      if (!std::isnan(cell_number(row[c]))) return true;
  }
  return false;
}
}  // namespace

Table aggregate_table(const BatchResult& result, const CoverageTarget& target) {
  const bool ssim = any_column(result, kSsimColumn);
  const bool bytes = any_column(result, kBytesColumn);
  Table t;
  t.columns = {"subset", "k", "files"};
  for (const std::string m : {"psnr_db", "ssim"}) {
    if (m == "ssim" && !ssim) continue;
    for (const std::string s : {"min", "p5", "median", "mean"}) t.columns.push_back(m + "_" + s);
  }
  t.columns.insert(t.columns.end(), {"stored_values_total", "raw_samples_total", "stored_ratio"});
  if (bytes) t.columns.insert(t.columns.end(), {"bytes_total", "bits_per_pixel_mean"});
  t.columns.insert(t.columns.end(), {"files_meeting_target", "share_meeting_target"});
  std::vector<std::string> subsets = {"all"};
  if (result.shared) subsets = {"all", "training", "held_out"};
  const std::vector<int> ks = batch_ks(result);
  for (const auto& subset : subsets) {
    for (int k : ks) {
      std::vector<double> psnr, ss, bpp;
      double stored = 0.0, raw = 0.0, byte_total = 0.0;
      std::size_t count = 0, meeting = 0;
      for (const auto& f : result.files) {
        if (!f.ok) continue;
        if (subset == "training" && !f.training) continue;
        if (subset == "held_out" && f.training) continue;
        if (!row_at(f, k)) continue;
        ++count;
        const FileQuality q = quality_at(f, k);
        psnr.push_back(q.psnr_db);
        ss.push_back(q.ssim);
        meeting += meets_target(q, target) ? 1 : 0;
        stored += stored_at(f, k);
        raw += double(f.width) * f.height * f.channels;
        if (bytes) {
          const double b = value_at(f, k, kBytesColumn);
          byte_total += b;
          bpp.push_back(8.0 * b / (double(f.width) * f.height));
        }
      }
      if (count == 0) continue;
      if (result.shared) stored += double(k) * double(result.shared->dimension) + double(result.shared->dimension);
      std::vector<Cell> row = {subset, std::int64_t(k), std::int64_t(count)};
      const Spread p = spread_of(psnr);
      row.insert(row.end(), {p.min, p.p5, p.median, p.mean});
      if (ssim) {
        const Spread s = spread_of(ss);
        row.insert(row.end(), {s.min, s.p5, s.median, s.mean});
      }
      row.insert(row.end(), {std::int64_t(std::llround(stored)), std::int64_t(std::llround(raw)), stored / raw});
      if (bytes) {
        double mean_bpp = 0.0;
        for (double b : bpp) mean_bpp += b;
        row.insert(row.end(), {std::int64_t(std::llround(byte_total)), mean_bpp / double(bpp.size())});
      }
      row.insert(row.end(), {std::int64_t(meeting), double(meeting) / double(count)});
      t.add_row(std::move(row));
    }
  }
  return t;
}

Recommendation batch_recommendation(const BatchResult& result, const CoverageTarget& target) {
  const std::vector<int> ks = batch_ks(result);
  std::vector<std::vector<FileQuality>> q(ks.size());
  for (std::size_t i = 0; i < ks.size(); ++i)
    for (const auto& f : result.files)
      if (f.ok) q[i].push_back(quality_at(f, ks[i]));
  return recommend_k(ks, q, target);
}

}  // namespace pcasweep
