// pcasweep/reconstruct/reconstruct.hpp — from a basis back to observations.
//
// Contract: coefficients C = (X − 1·μᵀ)·V (N×r) are computed once; the
// reconstruction at k is X̂_k = C[:, :k]·V[:, :k]ᵀ + 1·μᵀ (N×d). A sweep over
// increasing k adds one block of components at a time, so a whole sweep
// costs one N×d×r product, not one per k.
#pragma once

#include <Eigen/Dense>

#include "observe/observation_blocks.hpp"
#include "solve/basis.hpp"

namespace pcasweep {

// X: N×d, basis of dimension d with r components. Returns C = (X − 1μᵀ)V[:, :k], N×k.
// k <= r. Throws Error(usage) on a shape mismatch or k out of range.
Eigen::MatrixXd project(const Basis& basis, const Eigen::MatrixXd& X, Eigen::Index k);

// The same for X given in blocks of rows (observe/observation_blocks.hpp), never held:
// C = (X − 1μᵀ)V[:, :k], N×k, rows in X's order. Holds N×k. Throws Error(usage) for k
// outside 0..r.
Eigen::MatrixXd project(const Basis& basis, const ObservationBlocks& X, Eigen::Index k);

// C: N×k coefficients. Returns X̂ = C·V[:, :k]ᵀ + 1μᵀ, N×d.
Eigen::MatrixXd reconstruct(const Basis& basis, const Eigen::MatrixXd& coefficients);

// Walks k upwards, keeping the running reconstruction.
class ReconstructionSweep {
 public:
  // basis: dimension d, rank r. X: N×d. Computes all r coefficients at once.
  ReconstructionSweep(const Basis& basis, const Eigen::MatrixXd& X);
  // Moves to k (k >= current k, k <= r) and returns X̂_k, N×d.
  const Eigen::MatrixXd& advance_to(Eigen::Index k);
  Eigen::Index current_k() const { return k_; }
  // All coefficients, N×r.
  const Eigen::MatrixXd& coefficients() const { return coefficients_; }

 private:
  const Basis& basis_;
  Eigen::MatrixXd coefficients_;
  Eigen::MatrixXd current_;
  Eigen::Index k_ = 0;
};

}  // namespace pcasweep
