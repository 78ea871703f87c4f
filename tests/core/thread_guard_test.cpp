// core/thread_guard: every thread-count change is undone when its scope ends,
// by a throw too. Read back through omp_get_max_threads (the OpenMP
// specification: it returns the nthreads-var that omp_set_num_threads sets)
// and Eigen::nbThreads.
#include <doctest/doctest.h>

#include <omp.h>
#include <stdexcept>

#include "core/thread_guard.hpp"

using pcasweep::ThreadGuard;

TEST_CASE("ThreadGuard: sets what it is asked, leaves the rest, restores both, also after a throw") {
  // Eigen::nbThreads() follows OpenMP's setting until Eigen's own is set, so
  // both are fixed first (by a guard too), then changed inside.
  const ThreadGuard base({.openmp = 2, .eigen = 2});
  const int omp_before = omp_get_max_threads(), eigen_before = Eigen::nbThreads();
  {
    const ThreadGuard outer({.openmp = 3});
    CHECK(omp_get_max_threads() == 3);
    CHECK(Eigen::nbThreads() == eigen_before);  // 0: unchanged
    {
      const ThreadGuard inner({.openmp = 1, .eigen = 1});
      CHECK(omp_get_max_threads() == 1);
      CHECK(Eigen::nbThreads() == 1);
    }
    CHECK(omp_get_max_threads() == 3);  // nested guards unwind in order
    CHECK(Eigen::nbThreads() == eigen_before);
  }
  CHECK(omp_get_max_threads() == omp_before);
  try {
    const ThreadGuard guard({.openmp = 1, .eigen = 1});
    throw std::runtime_error("a failed write");
  } catch (const std::runtime_error&) {
  }
  CHECK(omp_get_max_threads() == omp_before);
  CHECK(Eigen::nbThreads() == eigen_before);
}
