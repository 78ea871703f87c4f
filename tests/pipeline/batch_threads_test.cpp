// SerialLinearAlgebra (pipeline/batch_detail.hpp): the batch's thread settings
// are restored when the scope ends, including by an exception.
#include <doctest/doctest.h>

#include <Eigen/Core>
#include <omp.h>
#include <stdexcept>

#include "pipeline/batch_detail.hpp"

using pcasweep::detail::SerialLinearAlgebra;

TEST_CASE("SerialLinearAlgebra: one thread inside, the caller's settings back after, also after a throw") {
  const int eigen_before = Eigen::nbThreads(), omp_before = omp_get_max_threads();
  Eigen::setNbThreads(2);
  omp_set_num_threads(2);
  {
    const SerialLinearAlgebra serial(true);
    CHECK(Eigen::nbThreads() == 1);
    CHECK(omp_get_max_threads() == 1);
  }
  CHECK(Eigen::nbThreads() == 2);
  CHECK(omp_get_max_threads() == 2);
  try {
    const SerialLinearAlgebra serial(true);
    throw std::runtime_error("a failed report write");
  } catch (const std::runtime_error&) {
  }
  CHECK(Eigen::nbThreads() == 2);
  CHECK(omp_get_max_threads() == 2);
  {
    const SerialLinearAlgebra eigen_only(false);
    CHECK(Eigen::nbThreads() == 1);
    CHECK(omp_get_max_threads() == 2);  // OpenMP left to the worker threads
  }
  Eigen::setNbThreads(eigen_before);
  omp_set_num_threads(omp_before);
}
