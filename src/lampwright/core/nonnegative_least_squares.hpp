#pragma once
// Non-negative least squares: minimise ||A x - b||_2 subject to x >= 0, by the active-set method
// of Lawson and Hanson ("Solving Least Squares Problems", 1974, ch. 23, algorithm NNLS). Neither
// Eigen 3.4 nor NLopt 2.7 offers it; the unconstrained sub-problems use Eigen's pivoted QR.
#include <Eigen/Dense>

namespace lampwright {

struct NnlsResult {
    Eigen::VectorXd x;
    double residual_norm = 0;  // ||A x - b||_2
    int iterations = 0;
    bool converged = false;    // false only when the iteration limit was reached
};

// `max_iterations` bounds the outer loop (default 3 n, as Lawson and Hanson suggest).
NnlsResult nonnegative_least_squares(const Eigen::MatrixXd& a, const Eigen::VectorXd& b, int max_iterations = 0);

}  // namespace lampwright
