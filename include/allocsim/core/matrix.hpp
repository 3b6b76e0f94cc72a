// Dense matrix and vector types shared by every layer.
//
// Matrices are row-major so that one agent's row is contiguous (the hot
// loops of the solvers and the simulation walk rows) and so that they map
// directly onto HDF5 and CSV, which are row-major too.
#pragma once

#include <Eigen/Dense>
#include <cstdint>

namespace allocsim {

using Matrix = Eigen::Matrix<double, Eigen::Dynamic, Eigen::Dynamic, Eigen::RowMajor>;
using Vector = Eigen::VectorXd;
using RowVector = Eigen::RowVectorXd;

// 0/1 matrix: 0 means agent i can never use partner j.
using AccessMask = Eigen::Matrix<std::uint8_t, Eigen::Dynamic, Eigen::Dynamic, Eigen::RowMajor>;

}  // namespace allocsim
