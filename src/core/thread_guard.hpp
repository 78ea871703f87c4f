// pcasweep/core/thread_guard.hpp — changing a thread count for a scope, and only that way.
//
// Contract: every change of a thread count in pcasweep (its library, tests and
// benchmarks) goes through a ThreadGuard: it sets the counts asked for when
// made and puts back what was there when it goes, also when an exception
// leaves the scope, so no early return or throw leaves a caller with another
// setting. Two counts can be set:
//  - openmp: the OpenMP team size of the calling thread's later parallel
//    regions (omp_set_num_threads sets the calling thread's own default, so a
//    guard made on a worker thread affects that worker only);
//  - eigen: the threads Eigen's own products use (Eigen::setNbThreads, a
//    process-wide setting: make such a guard on one thread only).
// 0 leaves a count as it is. Without OpenMP the openmp count is ignored.
// OpenBLAS's own thread count is not set anywhere: the OpenMP build of
// OpenBLAS follows the OpenMP setting of the calling thread.
#pragma once

#include <Eigen/Core>
#ifdef _OPENMP
#include <omp.h>
#endif

namespace pcasweep {

struct ThreadCounts {
  int openmp = 0;  // this thread's OpenMP teams; 0: unchanged
  int eigen = 0;   // Eigen's threads (process-wide); 0: unchanged
};

class ThreadGuard {
 public:
  // counts: the settings while the guard lives (each >= 0). Throws nothing.
  explicit ThreadGuard(ThreadCounts counts) : counts_(counts) {
    if (counts_.eigen > 0) {
      eigen_before_ = Eigen::nbThreads();
      Eigen::setNbThreads(counts_.eigen);
    }
#ifdef _OPENMP
    if (counts_.openmp > 0) {
      openmp_before_ = omp_get_max_threads();
      omp_set_num_threads(counts_.openmp);
    }
#endif
  }
  // Puts back the counts this guard changed.
  ~ThreadGuard() {
    if (counts_.eigen > 0) Eigen::setNbThreads(eigen_before_);
#ifdef _OPENMP
    if (counts_.openmp > 0) omp_set_num_threads(openmp_before_);
#endif
  }
  ThreadGuard(const ThreadGuard&) = delete;
  ThreadGuard& operator=(const ThreadGuard&) = delete;

 private:
  ThreadCounts counts_;
  int eigen_before_ = 0;
  int openmp_before_ = 1;
};

}  // namespace pcasweep
