#include "lampwright/production/lot_correction.hpp"

#include "lampwright/core/error.hpp"

#include <Eigen/Dense>
#include <fmt/format.h>

#include <cmath>

namespace lampwright {

namespace {

Chromaticity model_xy(const BlendInput& recipe, const std::vector<double>& w) {
    BlendInput b = recipe;
    std::vector<BlendComponent> kept;
    for (std::size_t i = 0; i < w.size(); ++i)
        if (w[i] > 0) {
            b.components[i].mass_fraction = w[i];
            kept.push_back(b.components[i]);
        }
    b.components = kept;
    AssessOptions o;
    o.spectral_features = false;
    return evaluate_blend(b, o).assessment.xy;
}

}  // namespace

LotCorrection correct_recipe(const BlendInput& recipe, const Chromaticity& lot_centroid, const Chromaticity& target,
                             const MacAdamEllipse& step_ellipse) {
    const std::size_t n = recipe.components.size();
    if (n < 2) throw Error("a correction needs a recipe with at least two components");
    LotCorrection c;
    c.lot_centroid = lot_centroid;
    c.target = target;
    c.old_fractions = normalised_mass_fractions(recipe);
    c.model_centroid = model_xy(recipe, c.old_fractions);
    const double off_x = lot_centroid.x - c.model_centroid.x, off_y = lot_centroid.y - c.model_centroid.y;
    const Chromaticity aim{target.x - off_x, target.y - off_y};  // where the model must land
    MacAdamEllipse at_target = step_ellipse;
    at_target.centre = target;
    c.offset_steps = macadam_steps(at_target, lot_centroid);

    std::vector<double> w = c.old_fractions;
    std::vector<bool> free(n, true);
    const double h = 1e-4;
    for (int iteration = 0; iteration < 12; ++iteration) {
        const Chromaticity now = model_xy(recipe, w);
        const Eigen::Vector2d residual(aim.x - now.x, aim.y - now.y);
        if (residual.norm() < 1e-7) break;
        // Jacobian by central differences along each free fraction (others renormalised implicitly by the sum row).
        std::vector<std::size_t> idx;
        for (std::size_t i = 0; i < n; ++i)
            if (free[i]) idx.push_back(i);
        Eigen::MatrixXd A(3, static_cast<Eigen::Index>(idx.size()));
        for (std::size_t k = 0; k < idx.size(); ++k) {
            std::vector<double> up = w, down = w;
            up[idx[k]] += h;
            down[idx[k]] = std::max(0.0, down[idx[k]] - h);
            const double span = up[idx[k]] - down[idx[k]];
            const Chromaticity a = model_xy(recipe, up), b = model_xy(recipe, down);
            A(0, static_cast<Eigen::Index>(k)) = (a.x - b.x) / span;
            A(1, static_cast<Eigen::Index>(k)) = (a.y - b.y) / span;
            A(2, static_cast<Eigen::Index>(k)) = 1.0;
        }
        const Eigen::Vector3d rhs(residual(0), residual(1), 0.0);
        const Eigen::VectorXd dw = A.completeOrthogonalDecomposition().solve(rhs);  // minimum-norm step
        bool clipped = false;
        for (std::size_t k = 0; k < idx.size(); ++k) {
            w[idx[k]] += dw(static_cast<Eigen::Index>(k));
            if (w[idx[k]] <= 0) {
                w[idx[k]] = 0;
                free[idx[k]] = false;
                clipped = true;
            }
        }
        double total = 0;
        for (double v : w) total += v;
        for (double& v : w) v /= total;
        if (std::count(free.begin(), free.end(), true) < 3) {
            c.message = "the correction would empty all but two components; the target is out of this recipe's reach";
            break;
        }
        (void)clipped;
    }
    // As weighed and written to a recipe: 6 decimals (the expected centroid is for these).
    for (double& v : w) v = std::round(v * 1e6) / 1e6;
    c.new_fractions = w;
    const Chromaticity reached = model_xy(recipe, w);
    c.expected_centroid = {reached.x + off_x, reached.y + off_y};
    c.expected_steps = macadam_steps(at_target, c.expected_centroid);
    c.feasible = c.expected_steps < 0.5 && c.message.empty();
    if (c.message.empty() && !c.feasible)
        c.message = fmt::format("the best correction still leaves the lot {:.2f} steps from the target", c.expected_steps);
    c.corrected = recipe;
    std::vector<BlendComponent> kept;
    for (std::size_t i = 0; i < n; ++i)
        if (w[i] > 0) {
            c.corrected.components[i].mass_fraction = w[i];
            kept.push_back(c.corrected.components[i]);
        }
    c.corrected.components = kept;
    return c;
}

}  // namespace lampwright
