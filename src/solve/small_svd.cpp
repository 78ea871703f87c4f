// pcasweep/solve/small_svd.cpp — see small_svd.hpp.
#include "solve/small_svd.hpp"

#include <Eigen/SVD>

namespace pcasweep {

SmallSvd small_svd(const Eigen::MatrixXd& r) {
  Eigen::BDCSVD<Eigen::MatrixXd> svd(r, Eigen::ComputeFullU | Eigen::ComputeFullV);
  return {svd.singularValues(), svd.matrixU(), svd.matrixV()};
}

}  // namespace pcasweep
