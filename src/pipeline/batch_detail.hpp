// pcasweep/pipeline/batch_detail.hpp — helpers shared by batch.cpp and batch_visuals.cpp (internal).
#pragma once

#include <Eigen/Core>
#include <string>
#include <vector>

#include "core/thread_guard.hpp"
#include "pipeline/batch.hpp"

namespace pcasweep::detail {

// While alive: Eigen's products on one thread and, when `openmp` is set, this
// thread's OpenMP teams of one; both settings are restored on destruction,
// also when an exception leaves the scope (a ThreadGuard, core/thread_guard.hpp).
// (The batch runs files in parallel, so the linear algebra inside each must
// not start threads of its own.)
class SerialLinearAlgebra : public ThreadGuard {
 public:
  explicit SerialLinearAlgebra(bool openmp) : ThreadGuard({.openmp = openmp ? 1 : 0, .eigen = 1}) {}
};

// requested: the --k list (empty: default_ks(rank)). Returns the ks for a file
// whose basis has `rank` components: each k clamped to rank, de-duplicated, ascending.
std::vector<int> file_ks(const std::vector<int>& requested, Eigen::Index rank);

// Reads `path` and observes it as patches; the basis is left empty. Throws Error.
ImageAnalysis observe_file(const std::string& path, const ImageStudySettings& settings);

// Throws Error(data) if `a` does not fit the shared basis (d, bit depth).
void check_against_shared(const ImageAnalysis& a, const SharedBasisInfo& shared, const std::string& path);

// Reads `path` and projects it on the shared basis (streamed patches, the
// basis copied in). Throws Error, also when the file does not fit the basis.
ImageAnalysis observe_on_shared(const std::string& path, const ImageStudySettings& settings,
                                const SharedBasisInfo& shared);

}  // namespace pcasweep::detail
