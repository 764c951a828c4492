#pragma once
// Production spread of an LED conversion layer, and its sensitivities, on the full layer model
// (evaluate_layer: no fast path, each module is one transport solve of a few milliseconds).
//
// Sources of variation per module (defaults from memory, in kLayerToleranceDefaults):
//   loading    each phosphor's loading c_i (1 + sl z_i): dispensing and settling of the slurry;
//   thickness  the layer thickness t (1 + st z): dispensed volume and cure shrinkage;
//   d50        each phosphor lot's median grain size d50_i (1 + sd z_i), held above a tenth:
//              it changes the grains' scattering (anomalous diffraction, led/layer_optics.hpp);
//   measurement x += sm zx, y += sm zy on the module's chromaticity.
// The result is the chromaticity spread in MacAdam steps around the target, the share of modules
// inside the n-step ellipse (binomial standard error), and the spread of the pump leak and of the
// efficacy. Random numbers: std::mt19937_64 seeded with `seed`, std::normal_distribution<double>;
// per module, per component in order the loading and d50 normals, then thickness, x, y (the same
// seed gives the same draws with one standard library).
//
// The sensitivity: what 1 % more of each component's loading, and 1 % more thickness, does to
// u', v', CCT, Duv and Ra at the operating temperature (central differences).
#include "lampwright/design/optimiser.hpp"
#include "lampwright/design/targets.hpp"
#include "lampwright/led/layer.hpp"

#include <cstdint>
#include <string>
#include <vector>

namespace lampwright {

struct LayerToleranceDefault {
    const char* key;
    double sigma;
    const char* unit;
    const char* source;
};
inline constexpr LayerToleranceDefault kLayerToleranceDefaults[] = {
    {"loading_sigma", 0.02, "relative to each phosphor's loading", "from memory: dispensed phosphor-in-silicone loadings hold about +-2-5 %"},
    {"thickness_sigma", 0.03, "relative to the thickness", "from memory: dispensed or sprayed layers hold about +-3-5 % in thickness"},
    {"d50_sigma", 0.05, "relative to each lot's d50", "from memory: lot-to-lot d50 within about +-10 % of the specification"},
    {"measurement_sigma_xy", 0.0015, "in x and in y", "from memory: repeatability of a colour measurement about 0.001-0.002 in x, y"},
};
double layer_tolerance_default(const std::string& key);

struct LayerToleranceProblem {
    LayerDesign design;
    MacAdamEllipse ellipse;  // one-step ellipse; its centre is the target
    double steps = 4;
    double loading_sigma = layer_tolerance_default("loading_sigma");
    double thickness_sigma = layer_tolerance_default("thickness_sigma");
    double d50_sigma = layer_tolerance_default("d50_sigma");
    double measurement_sigma_xy = layer_tolerance_default("measurement_sigma_xy");
    std::size_t draws = 2000;
    std::uint64_t seed = 1;
};

struct LayerToleranceResult {
    std::size_t draws = 0, inside = 0, failed = 0;  // failed: modules the model could not evaluate
    std::uint64_t seed = 0;
    double steps_limit = 0;
    Chromaticity target, nominal_xy;
    double nominal_steps = 0;
    double mean_steps = 0, sd_steps = 0, p50 = 0, p90 = 0, p95 = 0, max_steps = 0;
    double mean_x = 0, mean_y = 0, sd_x = 0, sd_y = 0;
    double yield = 0, yield_standard_error = 0;  // inside / draws, sqrt(p (1 - p) / N)
    double mean_leak = 0, sd_leak = 0;           // pump leak fraction of the output power
    double mean_efficacy = 0, sd_efficacy = 0;   // lm per W pump
};

// Throws Error for a malformed problem (negative sigma, no draws, no components).
LayerToleranceResult run_layer_tolerance(const LayerToleranceProblem& problem);

// Rows labelled by component (and "thickness"); mass_fraction holds the loading (the thickness in um).
std::vector<SensitivityRow> layer_sensitivity(const LayerDesign& design, double relative_step = 0.01);

}  // namespace lampwright
