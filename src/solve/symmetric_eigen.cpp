#include "solve/symmetric_eigen.hpp"

#include <Eigen/Eigenvalues>
#include <vector>

#include "core/error.hpp"

#ifdef PCASWEEP_HAVE_LAPACK
extern "C" void dsyevr_(const char* jobz, const char* range, const char* uplo, const int* n, double* a, const int* lda,
                        const double* vl, const double* vu, const int* il, const int* iu, const double* abstol,
                        int* m, double* w, double* z, const int* ldz, int* isuppz, double* work, const int* lwork,
                        int* iwork, const int* liwork, int* info);
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

SymmetricEigen leading_symmetric_eigen(const Eigen::MatrixXd& s, Eigen::Index count) {
#ifdef PCASWEEP_HAVE_LAPACK
  const Eigen::Index m = s.rows();
  // LAPACK dsyevr for eigenvalues il..iu (ascending) and their vectors only.
  Eigen::MatrixXd a = s;
  const int n = int(m), lda = int(m), il = int(m - count + 1), iu = int(m), ldz = int(m);
  const char jobz = 'V', range = 'I', uplo = 'L';
  const double vl = 0.0, vu = 0.0, abstol = 0.0;  // abstol 0: LAPACK's default accuracy
  int found = 0, info = 0, lwork = -1, liwork = -1, iwork_size = 0;
  double work_size = 0.0;
  Eigen::VectorXd w(m);
  Eigen::MatrixXd z(m, count);
  std::vector<int> isuppz(std::size_t(2 * count));
  dsyevr_(&jobz, &range, &uplo, &n, a.data(), &lda, &vl, &vu, &il, &iu, &abstol, &found, w.data(), z.data(), &ldz,
          isuppz.data(), &work_size, &lwork, &iwork_size, &liwork, &info);
  if (info != 0) throw data_error("the symmetric eigensolver (LAPACK dsyevr) refused its workspace query");
  lwork = int(work_size);
  liwork = iwork_size;
  std::vector<double> work(std::size_t(std::max(1, lwork)));
  std::vector<int> iwork(std::size_t(std::max(1, liwork)));
  dsyevr_(&jobz, &range, &uplo, &n, a.data(), &lda, &vl, &vu, &il, &iu, &abstol, &found, w.data(), z.data(), &ldz,
          isuppz.data(), work.data(), &lwork, iwork.data(), &liwork, &info);
  if (info != 0 || found != int(count)) throw data_error("the symmetric eigensolver (LAPACK dsyevr) did not converge");
  SymmetricEigen out;
  out.values = w.head(count).reverse();
  out.vectors = z.rowwise().reverse();
  return out;
#else
  SymmetricEigen all = symmetric_eigen(s, true);
  all.values.conservativeResize(count);
  all.vectors.conservativeResize(Eigen::NoChange, count);
  return all;
#endif
}

}  // namespace pcasweep
