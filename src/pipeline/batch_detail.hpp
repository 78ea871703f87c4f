// pcasweep/pipeline/batch_detail.hpp — helpers shared by batch.cpp and batch_report.cpp (internal).
#pragma once

#include <Eigen/Core>
#include <string>
#include <vector>
#ifdef _OPENMP
#include <omp.h>
#endif

#include "pipeline/batch.hpp"

namespace pcasweep::detail {

// While alive: Eigen's products on one thread and, when `openmp` is set, this
// thread's OpenMP teams of one; both settings are restored on destruction,
// also when an exception leaves the scope. (The batch runs files in parallel,
// so the linear algebra inside each must not start threads of its own.)
class SerialLinearAlgebra {
 public:
  explicit SerialLinearAlgebra(bool openmp) : eigen_before_(Eigen::nbThreads()), openmp_(openmp) {
    Eigen::setNbThreads(1);
#ifdef _OPENMP
    if (openmp_) {
      omp_before_ = omp_get_max_threads();
      omp_set_num_threads(1);
    }
#endif
  }
  ~SerialLinearAlgebra() {
    Eigen::setNbThreads(eigen_before_);
#ifdef _OPENMP
    if (openmp_) omp_set_num_threads(omp_before_);
#endif
  }
  SerialLinearAlgebra(const SerialLinearAlgebra&) = delete;
  SerialLinearAlgebra& operator=(const SerialLinearAlgebra&) = delete;

 private:
  int eigen_before_;
  bool openmp_;
  int omp_before_ = 1;
};

// Column names the batch looks for in a file's sweep table. Quality and size
// columns added to sweep_table() by other stages flow into batch.csv as they
// are; these are the ones the aggregates and the recommendation read.
inline const std::string kSsimColumn = "ssim";
inline const std::string kBytesColumn = "bytes";
// Numbers kept (basis, coefficients, mean), the column of sweep_table() (pipeline/image_study.hpp).
inline const std::string kStoredColumn = "stored_values_estimate";

// requested: the --k list (empty: default_ks(rank)). Returns the ks for a file
// whose basis has `rank` components: each k clamped to rank, de-duplicated, ascending.
std::vector<int> file_ks(const std::vector<int>& requested, Eigen::Index rank);

// Reads `path` and observes it as patches; the basis is left empty. Throws Error.
ImageAnalysis observe_file(const std::string& path, const ImageStudySettings& settings);

// Throws Error(data) if `a` does not fit the shared basis (d, bit depth).
void check_against_shared(const ImageAnalysis& a, const SharedBasisInfo& shared, int bit_depth,
                          const std::string& path);

// Index of column `name` in t, or -1.
int column_index(const Table& t, const std::string& name);
// A numeric cell as double (NaN for empty or text).
double cell_number(const Cell& c);
// The file's row at k; for k beyond its largest k, its last row (the file is
// then reconstructed with every component it has). nullptr if none.
const std::vector<Cell>* row_at(const FileResult& f, int k);
// A column's value at k (NaN when absent).
double value_at(const FileResult& f, int k, const std::string& column);
// Stored values at k (either column name).
double stored_at(const FileResult& f, int k);
// PSNR and SSIM at k.
FileQuality quality_at(const FileResult& f, int k);

}  // namespace pcasweep::detail
