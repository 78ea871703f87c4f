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

void check_against_shared(const ImageAnalysis& a, const SharedBasisInfo& shared, const std::string& path) {
  const int bit_depth = shared.bit_depth;
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

ImageAnalysis observe_on_shared(const std::string& path, const ImageStudySettings& settings,
                                const SharedBasisInfo& shared) {
  ImageAnalysis a = observe_file(path, settings);
  check_against_shared(a, shared, path);
  a.basis = shared.basis;
  a.solve_report = shared.solve_report;
  return a;
}

}  // namespace detail

const SweepRow* row_at(const FileResult& f, int k) {
  const SweepRow* best = nullptr;
  int best_k = 0;
  for (const SweepRow& row : f.rows) {
    if (row.k == k) return &row;
    if (row.k > best_k) {
      best_k = row.k;
      best = &row;
    }
  }
  // k beyond the file's largest k (its rank): the file is kept whole there.
  return k > best_k ? best : nullptr;
}

FileQuality quality_at(const FileResult& f, int k) {
  const SweepRow* row = row_at(f, k);
  if (!row) return {};
  return {row->quality.psnr_db, row->ssim};
}

std::vector<const FileResult*> swept_files(const BatchResult& result) {
  std::vector<const FileResult*> out;
  for (const auto& f : result.files)
    if (f.ok) out.push_back(&f);
  return out;
}

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



void validate_settings(const BatchSettings& settings) {
  if (settings.threads < 1) throw usage_error("--threads must be at least 1");
  if (!(settings.target.coverage > 0.0 && settings.target.coverage <= 1.0))
    throw usage_error("--coverage must be a share in (0, 1] or a percentage in (0, 100]");
  if (settings.basis == BasisMode::shared && settings.train_files.empty() &&
      !(settings.train_fraction > 0.0 && settings.train_fraction <= 1.0))
    throw usage_error("--train-fraction must be in (0, 1]");
  if (settings.coding.enabled && settings.basis == BasisMode::shared)
    throw usage_error("--quality (coded bytes) works with --basis per-file only: the codec embeds each file's own basis");
}

// The training files of a shared basis, each with its index into the batch
// (the batch's size for a --train file that is not in the batch).
struct TrainingPlan {
  std::vector<std::string> paths;
  std::vector<std::size_t> index;
};

// --train files, or a seeded draw of train_fraction of the batch. Unreadable
// --train inputs are added to result.failures; extra files to shared.training_extra.
TrainingPlan plan_training(const BatchSettings& settings, BatchResult& result, SharedBasisInfo& shared) {
  const std::vector<std::string>& files = result.inputs.files;
  const std::size_t n = files.size();
  TrainingPlan plan;
  if (settings.train_files.empty()) {
    for (std::size_t i : draw_training(n, settings.train_fraction, settings.seed)) {
      plan.paths.push_back(files[i]);
      plan.index.push_back(i);
    }
    return plan;
  }
  CollectOptions co;
  co.supported = has_image_extension;
  const CollectedInputs train = collect_inputs(settings.train_files, co);
  for (const auto& f : train.failed) result.failures.push_back({f.path, "--train: " + f.reason});
  std::map<std::string, std::size_t> index;
  for (std::size_t i = 0; i < n; ++i) index.emplace(canonical_key(files[i]), i);
  for (const auto& p : train.files) {
    const auto it = index.find(canonical_key(p));
    plan.paths.push_back(p);
    plan.index.push_back(it == index.end() ? n : it->second);
    if (it == index.end()) shared.training_extra.push_back(p);
  }
  if (plan.paths.empty()) throw usage_error("--train: no image files among the training inputs");
  return plan;
}

// Adds one training file's patch scatter to `sum` (made on the first file,
// which also fixes the basis's d and bit depth). Throws Error.
void accumulate_training_file(const std::string& path, const ImageStudySettings& settings,
                              std::unique_ptr<ScatterSum>& sum, SharedBasisInfo& shared) {
  ImageAnalysis a = observe_file(path, settings);
  if (!sum) {
    sum = std::make_unique<ScatterSum>(a.dimension());
    shared.dimension = a.dimension();
    shared.bit_depth = a.image().bit_depth;
  }
  check_against_shared(a, shared, path);
  const PatchBlocks blocks(*a.patches(), a.image());
  const BlockedOperator<double> op(blocks);
  sum->add(op);
  shared.training_files.push_back(path);
}

// The shared basis: the training files' scatter accumulated one file at a
// time, solved once by the exact solver. A training file of the batch that
// cannot be read keeps its reason in its FileResult (reported once, in the
// sweep); an extra one lands in result.failures. Throws Error(data) when no
// training file gives at least 2 patches.
SharedBasisInfo train_shared_basis(const BatchSettings& settings, BatchResult& result,
                                   const BatchProgressFn& progress) {
  SharedBasisInfo shared;
  const TrainingPlan plan = plan_training(settings, result, shared);
  const std::size_t n = result.files.size();
  std::unique_ptr<ScatterSum> sum;
  BatchProgress state;
  state.phase = "training";
  state.total = plan.paths.size();
  for (std::size_t t = 0; t < plan.paths.size(); ++t) {
    const std::string& path = plan.paths[t];
    FileResult* in_batch = plan.index[t] < n ? &result.files[plan.index[t]] : nullptr;
    try {
      accumulate_training_file(path, settings.image, sum, shared);
      if (in_batch) in_batch->training = true;
    } catch (...) {
      const std::string why = error_text(std::current_exception(), path);
      if (in_batch) {
        in_batch->error = why;
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
  Solution solved = solve_exact(*sum);
  shared.basis = std::move(solved.basis);
  shared.solve_report = std::move(solved.report);
  shared.solve_report.reason = "shared basis: exact solver on the scatter accumulated over " +
                               std::to_string(sum->blocks()) + " training file(s)";
  return shared;
}

// Sweeps one file at its ks: its own basis, or projected on `shared`. Fills
// f's figures and rows and sets f.ok; throws Error for a file that fails.
void sweep_file(FileResult& f, const BatchSettings& settings, const SharedBasisInfo* shared) {
  const ImageAnalysis a = shared ? observe_on_shared(f.path, settings.image, *shared)
                                 : analyze_image(f.path, settings.image);
  const std::vector<int> ks = file_ks(settings.ks, a.basis.rank());
  f.rows = sweep_ks(a, ks, {}, shared ? SweepCoding{} : settings.coding);
  if (shared) {  // the basis is counted once for the batch: the file keeps its coefficients
    const double raw = double(a.image().sample_count());
    for (auto& r : f.rows) {
      r.stored_values = std::int64_t(a.observations()) * r.k;
      r.ratio = double(r.stored_values) / raw;
    }
  }
  const Image& image = a.image();
  f.width = image.width;
  f.height = image.height;
  f.channels = image.channels;
  f.bit_depth = image.bit_depth;
  f.channel_names = image.channel_names;
  f.observations = a.observations();
  f.dimension = a.dimension();
  f.rank = a.basis.rank();
  f.ok = true;
}

// One worker: takes the next file until none is left. A file that already
// has an error (a training file that could not be read) is not tried again.
void sweep_worker(BatchResult& result, const BatchSettings& settings, std::atomic<std::size_t>& next,
                  std::mutex& mutex, BatchProgress& state, const BatchProgressFn& progress) {
  const ThreadGuard one_thread({.openmp = 1});  // this worker's own OpenMP teams
  const SharedBasisInfo* shared = result.shared ? &*result.shared : nullptr;
  for (std::size_t i; (i = next.fetch_add(1)) < result.files.size();) {
    FileResult& f = result.files[i];
    const auto t0 = std::chrono::steady_clock::now();
    if (f.error.empty()) {
      try {
        sweep_file(f, settings, shared);
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
}

// The sweep: `workers` files at a time, each file's linear algebra on one
// thread. Measured (docs/batch.md): with OpenMP inside each file instead,
// a batch took several times longer, the threads spinning at every small
// parallel region (figures in docs/batch.md); so the files are the unit of
// parallelism even with --threads 1.
void sweep_files(BatchResult& result, const BatchSettings& settings, const BatchProgressFn& progress) {
  const std::size_t n = result.files.size();
  const int workers = int(std::min<std::size_t>(std::size_t(settings.threads), std::max<std::size_t>(n, 1)));
  result.threads_used = workers;
  result.parallel_mode = "files";
  const SerialLinearAlgebra serial(false);  // the worker threads set their own OpenMP teams
  std::mutex mutex;
  BatchProgress state;
  state.phase = "sweep";
  state.total = n;
  std::atomic<std::size_t> next{0};
  std::vector<std::thread> pool;
  for (int w = 0; w < workers; ++w)
    pool.emplace_back([&] { sweep_worker(result, settings, next, mutex, state, progress); });
  for (auto& t : pool) t.join();
}

// result.failures: those found while training, then the inputs that could
// not be collected, then the files that failed, in input order.
void collect_failures(BatchResult& result) {
  for (const auto& f : result.inputs.failed) result.failures.push_back(f);
  for (const auto& f : result.files)
    if (!f.ok) result.failures.push_back({f.path, f.error});
}

}  // namespace

BatchResult run_batch(const CollectedInputs& inputs, const BatchSettings& settings, const BatchProgressFn& progress) {
  validate_settings(settings);
  const auto start = std::chrono::steady_clock::now();
  BatchResult result;
  result.inputs = inputs;
  result.files.resize(inputs.files.size());
  for (std::size_t i = 0; i < inputs.files.size(); ++i) result.files[i].path = inputs.files[i];
  if (inputs.files.empty() && inputs.failed.empty()) throw data_error("no image files among the inputs");
  if (settings.basis == BasisMode::shared && !inputs.files.empty())
    result.shared = train_shared_basis(settings, result, progress);
  sweep_files(result, settings, progress);
  collect_failures(result);
  result.seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
  return result;
}

}  // namespace pcasweep
