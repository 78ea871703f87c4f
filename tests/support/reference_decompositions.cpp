#include "reference_decompositions.hpp"

#include <Eigen/Eigenvalues>
#include <Eigen/SVD>

namespace pcasweep::testing {

ReferenceSvd reference_svd(const Eigen::MatrixXd& A, bool with_v) {
  const Eigen::BDCSVD<Eigen::MatrixXd> svd(A, with_v ? Eigen::ComputeThinV : 0);
  ReferenceSvd out;
  out.values = svd.singularValues();
  if (with_v) out.V = svd.matrixV();
  return out;
}

Eigen::VectorXd reference_eigenvalues_decreasing(const Eigen::MatrixXd& S) {
  const Eigen::SelfAdjointEigenSolver<Eigen::MatrixXd> es(S, Eigen::EigenvaluesOnly);
  return es.eigenvalues().reverse();
}

}  // namespace pcasweep::testing
