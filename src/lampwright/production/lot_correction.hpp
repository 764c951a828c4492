#pragma once
// Correcting a coating recipe from a lot's measured centroid. The lot sits off the model's
// prediction for its recipe by an offset (drift of the line, lot-to-lot phosphor variation); the
// correction keeps that offset and moves the model's chromaticity so that model + offset lands
// on the target, with the smallest change of the mass fractions: Gauss-Newton steps on the blend
// model's Jacobian d(x, y)/dw with the minimum-norm solution of [J; 1] dw = [dc; 0] (the fractions
// keep summing to one), components that would go negative held at zero.
#include "lampwright/phosphor/blend.hpp"
#include "lampwright/design/targets.hpp"

#include <string>
#include <vector>

namespace lampwright {

struct LotCorrection {
    bool feasible = false;
    std::string message;
    BlendInput corrected;                 // the new recipe (normalised fractions)
    std::vector<double> old_fractions, new_fractions;
    Chromaticity lot_centroid, model_centroid, target, expected_centroid;
    double offset_steps = 0;              // lot centroid from the target, before
    double expected_steps = 0;            // expected centroid from the target, after
};

LotCorrection correct_recipe(const BlendInput& recipe, const Chromaticity& lot_centroid, const Chromaticity& target,
                             const MacAdamEllipse& step_ellipse);

}  // namespace lampwright
