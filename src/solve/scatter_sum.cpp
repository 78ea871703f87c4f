#include "solve/scatter_sum.hpp"

#include "core/error.hpp"

namespace pcasweep {

ScatterSum::ScatterSum(Eigen::Index d) : mean_(Eigen::VectorXd::Zero(d)), scatter_(Eigen::MatrixXd::Zero(d, d)) {}

void ScatterSum::add(const ScatterSource& block) {
  if (block.cols() != mean_.size()) {
    throw usage_error("a file has d = " + std::to_string(block.cols()) + " variables per observation, the shared basis " +
                      std::to_string(mean_.size()));
  }
  const Eigen::Index nb = block.rows();
  if (nb == 0) return;
  const Eigen::MatrixXd mb = block.scatter();
  if (n_ == 0) {
    n_ = nb;
    mean_ = block.mean();
    scatter_ = mb;
  } else {
    const double na = double(n_), nbd = double(nb), n = na + nbd;
    const Eigen::VectorXd delta = block.mean() - mean_;
    mean_ += delta * (nbd / n);
    scatter_ += mb;
    scatter_.noalias() += (delta * delta.transpose()) * (na * nbd / n);
    n_ += nb;
  }
  ++blocks_;
}

}  // namespace pcasweep
