#include "solve/symmetric_eigen.hpp"

#include <Eigen/Eigenvalues>
#include <vector>

#include "core/error.hpp"

#ifdef PCASWEEP_HAVE_LAPACK
extern "C" void dsyevd_(const char* jobz, const char* uplo, const int* n, double* a, const int* lda, double* w,
                        double* work, const int* lwork, int* iwork, const int* liwork, int* info);
#endif

namespace pcasweep {

SymmetricEigen symmetric_eigen(const Eigen::MatrixXd& s, bool with_vectors) {
  SymmetricEigen out;
  const Eigen::Index m = s.rows();
  if (m == 0) return out;
#ifdef PCASWEEP_HAVE_LAPACK
  // LAPACK dsyevd: workspace query first, then the solve; ascending order out.
  Eigen::MatrixXd a = s;
  Eigen::VectorXd w(m);
  const int n = int(m), lda = int(m);
  const char jobz = with_vectors ? 'V' : 'N', uplo = 'L';
  int info = 0, lwork = -1, liwork = -1, iwork_size = 0;
  double work_size = 0.0;
  dsyevd_(&jobz, &uplo, &n, a.data(), &lda, w.data(), &work_size, &lwork, &iwork_size, &liwork, &info);
  if (info != 0) throw data_error("the symmetric eigensolver (LAPACK dsyevd) refused its workspace query");
  lwork = int(work_size);
  liwork = iwork_size;
  std::vector<double> work(std::size_t(std::max(1, lwork)));
  std::vector<int> iwork(std::size_t(std::max(1, liwork)));
  dsyevd_(&jobz, &uplo, &n, a.data(), &lda, w.data(), work.data(), &lwork, iwork.data(), &liwork, &info);
  if (info != 0) throw data_error("the symmetric eigensolver (LAPACK dsyevd) did not converge");
  out.values = w.reverse();
  if (with_vectors) out.vectors = a.rowwise().reverse();
#else
  Eigen::SelfAdjointEigenSolver<Eigen::MatrixXd> eig(s, with_vectors ? Eigen::ComputeEigenvectors : Eigen::EigenvaluesOnly);
  if (eig.info() != Eigen::Success) throw data_error("the symmetric eigensolver did not converge");
  out.values = eig.eigenvalues().reverse();
  if (with_vectors) out.vectors = eig.eigenvectors().rowwise().reverse();
#endif
  return out;
}

}  // namespace pcasweep
