// pcasweep/observe/observation_blocks.hpp — an observation matrix made block by block.
//
// Contract: an ObservationBlocks source stands for an N×d observation matrix
// X that is never held whole: block b (a few thousand rows) is made on
// request — cut from an image, read from a file — and says where its rows
// sit in X as contiguous (first row, count) segments. Sources are read-only:
// fill() is called from several threads at once for different blocks. The
// solvers see such a source through solve/blocked_operator.hpp.
#pragma once

#include <Eigen/Dense>
#include <utility>
#include <vector>

namespace pcasweep {

// Row-major storage: one observation (d values) contiguous.
using RowBlock = Eigen::Matrix<double, Eigen::Dynamic, Eigen::Dynamic, Eigen::RowMajor>;

class ObservationBlocks {
 public:
  virtual ~ObservationBlocks() = default;
  // N (>= 1) and d.
  virtual Eigen::Index rows() const = 0;
  virtual Eigen::Index cols() const = 0;
  // Number of blocks (>= 1).
  virtual Eigen::Index block_count() const = 0;
  // Where block b's rows sit in X: (first row, count) segments in the block's
  // own row order; their counts sum to the block's row count.
  virtual std::vector<std::pair<Eigen::Index, Eigen::Index>> segments(Eigen::Index b) const = 0;
  // Fills `out` with block b: rows × d, in segments() order (storage reused when it fits).
  virtual void fill(Eigen::Index b, RowBlock& out) const = 0;
};

}  // namespace pcasweep
