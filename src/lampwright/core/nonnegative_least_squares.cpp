#include "lampwright/core/nonnegative_least_squares.hpp"

#include "lampwright/core/error.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <vector>

namespace lampwright {

namespace {

// Least-squares solution on the passive set P only (the other variables held at zero).
Eigen::VectorXd solve_on(const Eigen::MatrixXd& a, const Eigen::VectorXd& b, const std::vector<bool>& passive) {
    std::vector<Eigen::Index> cols;
    for (Eigen::Index j = 0; j < a.cols(); ++j)
        if (passive[static_cast<std::size_t>(j)]) cols.push_back(j);
    Eigen::MatrixXd sub(a.rows(), static_cast<Eigen::Index>(cols.size()));
    for (std::size_t k = 0; k < cols.size(); ++k) sub.col(static_cast<Eigen::Index>(k)) = a.col(cols[k]);
    const Eigen::VectorXd zs = sub.colPivHouseholderQr().solve(b);
    Eigen::VectorXd z = Eigen::VectorXd::Zero(a.cols());
    for (std::size_t k = 0; k < cols.size(); ++k) z(cols[k]) = zs(static_cast<Eigen::Index>(k));
    return z;
}

}  // namespace

NnlsResult nonnegative_least_squares(const Eigen::MatrixXd& a, const Eigen::VectorXd& b, int max_iterations) {
    if (a.rows() != b.size()) throw Error("nonnegative_least_squares: A and b have different numbers of rows");
    if (!a.allFinite() || !b.allFinite()) throw Error("nonnegative_least_squares: A or b holds a value that is not finite");
    const Eigen::Index n = a.cols();
    if (max_iterations <= 0) max_iterations = static_cast<int>(3 * std::max<Eigen::Index>(n, 1)) + 10;
    // Tolerance on the dual (gradient) for optimality, relative to the problem's scale.
    const double tol = 10 * std::numeric_limits<double>::epsilon() * std::max(1.0, a.norm()) * std::max(1.0, b.norm()) *
                       static_cast<double>(std::max<Eigen::Index>(n, 1));
    NnlsResult r;
    r.x = Eigen::VectorXd::Zero(n);
    std::vector<bool> passive(static_cast<std::size_t>(n), false);
    for (r.iterations = 0; r.iterations < max_iterations; ++r.iterations) {
        const Eigen::VectorXd w = a.transpose() * (b - a * r.x);  // negative gradient
        Eigen::Index best = -1;
        double best_w = tol;
        for (Eigen::Index j = 0; j < n; ++j)
            if (!passive[static_cast<std::size_t>(j)] && w(j) > best_w) best_w = w(j), best = j;
        if (best < 0) {
            r.converged = true;
            break;
        }
        passive[static_cast<std::size_t>(best)] = true;
        // Inner loop: step towards the passive-set solution, dropping variables that would turn negative.
        for (int inner = 0; inner <= n; ++inner) {
            const Eigen::VectorXd z = solve_on(a, b, passive);
            bool feasible = true;
            for (Eigen::Index j = 0; j < n; ++j)
                if (passive[static_cast<std::size_t>(j)] && z(j) <= 0) feasible = false;
            if (feasible) {
                r.x = z;
                break;
            }
            double alpha = 1;
            for (Eigen::Index j = 0; j < n; ++j)
                if (passive[static_cast<std::size_t>(j)] && z(j) <= 0) alpha = std::min(alpha, r.x(j) / (r.x(j) - z(j)));
            r.x += alpha * (z - r.x);
            for (Eigen::Index j = 0; j < n; ++j)
                if (passive[static_cast<std::size_t>(j)] && r.x(j) <= 1e-300) passive[static_cast<std::size_t>(j)] = false, r.x(j) = 0;
        }
    }
    r.residual_norm = (a * r.x - b).norm();
    return r;
}

}  // namespace lampwright
