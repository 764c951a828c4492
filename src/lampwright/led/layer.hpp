#pragma once
// A phosphor conversion layer on a UV/violet LED (README "LED layer physics"):
//   - pump: Beer-Lambert through the layer, absorption coefficient alpha(l) = sum_i kappa a_i(l) c_i
//     (kappa: mass absorption coefficient of a strong absorber, a_i: relative absorption per unit
//     mass, c_i: phosphor mass concentration in the layer); absorbed pump photons are shared by
//     alpha_i / alpha; the rest leaks out;
//   - re-absorption: a photon emitted at l inside the layer is absorbed before it escapes with
//     probability 1 - exp(-alpha(l) L), L = path factor x thickness, and goes to phosphor j with
//     alpha_j / alpha; the cascade over all generations is one linear system (Eigen);
//   - temperature: QE scaled by each phosphor's thermal quenching, emission shifted by its
//     peak shift per kelvin.
// Spectra on the 300-900 nm grid in W/nm for the pump power given (1 W by default).
#include "lampwright/colour/assessment.hpp"
#include "lampwright/phosphor/excitation.hpp"
#include "lampwright/phosphor/phosphor.hpp"

#include <optional>
#include <string>
#include <vector>

namespace lampwright {

// Model assumptions (README): kappa for relative absorption 1.0, a silicone binder's density,
// and the path factors of pump and emitted light (1 = once through the layer thickness).
inline constexpr double kReferenceMassAbsorption_cm2_per_g = 1000.0;
inline constexpr double kSiliconeDensity_g_per_cm3 = 1.1;
inline constexpr double kRoomTemperatureC = 25.0;

struct LayerComponent {
    std::string label;
    Phosphor phosphor;
    double loading = 0;  // mass fraction of this phosphor in the layer (phosphor + binder)
    std::optional<double> quantum_efficiency;  // overrides the phosphor's QE under the pump
    // Limits on the fitted loading (design keys min_loading, max_loading; fit_layer honours them,
    // evaluate_layer ignores them).
    std::optional<double> min_loading{}, max_loading{};
};

struct LayerDesign {
    std::string name;
    Excitation pump;                  // LED pump (peak, FWHM)
    std::optional<Spectrum> pump_spectrum;  // measured pump (spectral power), replaces the Gaussian shape
    double pump_power_W = 1.0;
    double thickness_um = 0;
    double binder_density_g_per_cm3 = kSiliconeDensity_g_per_cm3;
    double mass_absorption_cm2_per_g = kReferenceMassAbsorption_cm2_per_g;
    double pump_path_factor = 1.0;
    double emission_path_factor = 1.0;
    double temperature_C = kRoomTemperatureC;
    std::vector<LayerComponent> components;
};

struct LayerComponentResult {
    std::string label;
    double quantum_efficiency = 0;      // at the temperature evaluated
    double pump_photons_absorbed = 0;   // per pump photon
    double photons_absorbed = 0;        // all generations, per pump photon
    double photons_emitted = 0;         // per pump photon (before re-absorption)
    double photons_escaping = 0;        // per pump photon
    double power_escaping_W = 0;
};

struct LayerResult {
    std::string name;
    double temperature_C = kRoomTemperatureC;
    Spectrum spectrum;             // leaked pump + converted light, W/nm
    Spectrum converted_spectrum;   // converted light alone
    Spectrum leaked_pump_spectrum;
    std::vector<LayerComponentResult> components;
    // Photon balance per pump photon: 1 = leaked + escaping + lost (non-radiative).
    double pump_photons_leaked = 0, photons_escaping = 0, photons_lost = 0;
    // Energy balance in W: pump = leaked + converted out + Stokes loss + quantum loss.
    double pump_power_W = 0, leaked_pump_W = 0, converted_W = 0, stokes_loss_W = 0, quantum_loss_W = 0;
    double leaked_uv_violet_W = 0;       // leaked power below 420 nm
    double pump_leak_fraction = 0;       // leaked pump power / total output power
    // Two efficiencies, kept apart because leaked pump light is output but not converted light: a
    // thin layer that lets 99.8 % of the pump through has a total efficiency near 1 and a converted
    // efficiency near 0 (both per W of pump light, the input a package designer controls; common
    // practice, no source).
    double converted_efficiency = 0;     // converted light out (W) / pump power (W)
    double total_efficiency = 0;         // all light out, leaked pump included (W) / pump power (W)
    double efficacy_lm_per_W_pump = 0;   // lm per W of pump light
    Assessment assessment;
};

// `generations` = 0 solves the re-absorption cascade exactly (one linear system); n > 0 instead sums
// the first n generations of re-emitted photons one by one (a check on the exact solution).
LayerResult evaluate_layer(const LayerDesign& design, std::optional<double> temperature_C = std::nullopt,
                           const AssessOptions& options = {}, int generations = 0);

// Relative absorption of a phosphor at every grid wavelength: its data, zero where they end on the
// long side, and faded out across its own emission band by the share of its emitted photons that
// lie at longer wavelengths (the Stokes rule, without an artificial edge).
std::vector<double> absorption_profile(const Phosphor& p);

}  // namespace lampwright

namespace lampwright {

// Colour shift between two chromaticities in MacAdam steps, measured with the one-step ellipse of
// the ANSI C78.376 lamp colour whose centre is nearest to `from` (values from memory, see
// data/targets) -- the usual way lamp makers state a colour shift (common practice, no source).
double chromaticity_shift_steps(const Chromaticity& from, const Chromaticity& to);

// Leaked UV/violet power (W) above which the photobiological caution is printed: 0.1 % of the
// pump or 1 mW, whichever is smaller (our threshold; IEC 62471 sets the real assessment).
bool leak_needs_caution(const LayerResult& r, double pump_peak_nm);

// A design evaluated at room temperature and at its operating temperature, with the colour shift
// between the two: what every layer output (text, CSV, JSON, fit) reports.
struct LayerEvaluation {
    LayerDesign design;
    LayerResult room;       // at 25 degC
    LayerResult operating;  // at the design's operating temperature
    double shift_steps = 0; // chromaticity shift room -> operating, MacAdam steps
};
LayerEvaluation evaluate_layer_design(const LayerDesign& d, const AssessOptions& options = {});

}  // namespace lampwright
