#include "codec/dct_basis.hpp"

#include "codec/dct.hpp"

namespace pcasweep {

Basis dct_basis(const Eigen::VectorXd& mean, const Eigen::MatrixXd& scatter, Eigen::Index observations,
                const PatchOptions& patch, int channels) {
  const double dof = observations > 1 ? double(observations - 1) : 1.0;
  const Eigen::MatrixXd all = patch_dct_basis(patch.patch_height, patch.patch_width,
                                              patch.colour == ColourMode::joint ? channels : 1);
  OrderedDct ordered = order_dct_by_variance(all, dct_coefficient_variances(scatter, dof, all));
  Basis b;
  b.mean = mean;
  b.components = std::move(ordered.columns);
  b.eigenvalues = std::move(ordered.variances);
  b.variable_variances = scatter.diagonal() / dof;
  b.total_variance = b.variable_variances.sum();
  b.observation_count = observations;
  return b;
}

}  // namespace pcasweep
