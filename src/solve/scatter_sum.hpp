// pcasweep/solve/scatter_sum.hpp — a basis learned from many files without keeping them.
//
// Contract: a ScatterSum accumulates, file by file, the observation count n,
// the column means μ (d) and the scatter matrix M = A_cᵀA_c (d×d) of all rows
// added so far, merging each block with the pairwise update of Chan, Golub and
// LeVeque (1979): for blocks a and b with δ = μ_b − μ_a and n = n_a + n_b,
//   μ = μ_a + δ·n_b/n,   M = M_a + M_b + δδᵀ·n_a·n_b/n.
// Each block's own M_b comes from its ScatterSource (an operator centres in
// blocks: no AᵀA − nμμᵀ cancellation). Memory is O(d²), whatever the number
// of files. It keeps no observation, so it is a ScatterSource only (what the
// exact solver asks for), never an operator with products.
#pragma once

#include "solve/scatter_source.hpp"

namespace pcasweep {

class ScatterSum : public ScatterSource {
 public:
  // d: the number of variables every added block must have.
  explicit ScatterSum(Eigen::Index d);

  // block: the second moments of one file's observations (n_b×d), usually its
  // operator. Throws Error(usage) if its d differs.
  void add(const ScatterSource& block);

  Eigen::Index rows() const override { return n_; }
  Eigen::Index cols() const override { return mean_.size(); }
  const Eigen::VectorXd& mean() const override { return mean_; }
  // Returns M, d×d.
  Eigen::MatrixXd scatter() const override { return scatter_; }
  // Returns diag(M), d.
  Eigen::VectorXd column_sums_of_squares() const override { return scatter_.diagonal(); }
  // Number of blocks (files) added.
  int blocks() const { return blocks_; }

 private:
  Eigen::Index n_ = 0;
  Eigen::VectorXd mean_;
  Eigen::MatrixXd scatter_;
  int blocks_ = 0;
};

}  // namespace pcasweep
