#pragma once
// A phosphor conversion layer on an LED pump, 360-470 nm (README "LED layer physics"):
//   - absorption: alpha_i(l) = kappa a_i(l) c_i per phosphor (kappa: mass absorption coefficient
//     of a strong absorber, a_i: relative absorption per unit mass, c_i: its mass concentration);
//   - scattering: every phosphor's grains (d50, index against the silicone's) by anomalous
//     diffraction at their volume fraction, with one asymmetry g (led/layer_optics.hpp);
//   - transport with conversion and re-absorption: a sublayered two-flux model (fast) or a photon
//     Monte Carlo (reference) of the slab with Fresnel/TIR at the top and the package reflector
//     below (led/layer_transfer.hpp);
//   - temperature: QE scaled by each phosphor's thermal quenching, emission shifted by its
//     peak shift per kelvin; the pump moved and widened per kelvin of junction temperature;
//   - package: a flat top or a dome, the chip as a darker part of the package bottom.
// Spectra on the 300-900 nm grid in W/nm for the pump power given (1 W by default).
#include "lampwright/colour/assessment.hpp"
#include "lampwright/phosphor/excitation.hpp"
#include "lampwright/phosphor/phosphor.hpp"
#include "lampwright/led/layer_transfer.hpp"

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

namespace lampwright {

// Model assumptions (README): kappa for relative absorption 1.0, a silicone binder's density,
// and the path factors of pump and emitted light (1 = once through the layer thickness).
inline constexpr double kReferenceMassAbsorption_cm2_per_g = 1000.0;
inline constexpr double kSiliconeDensity_g_per_cm3 = 1.1;
inline constexpr double kRoomTemperatureC = 25.0;
// Optical defaults of the layer (README "LED layer physics"; all from memory): a methyl silicone's
// index 1.41 (phenyl silicones reach 1.53); light leaving into air; the asymmetry of 5-20 um
// phosphor grains 0.85 (Mie theory gives about 0.8-0.9 for such grains); a silvered or white
// package reflector 0.9.
inline constexpr double kSiliconeIndex = 1.41;
inline constexpr double kOutsideIndex = 1.0;
inline constexpr double kGrainAsymmetry = 0.85;
inline constexpr double kReflectorReflectance = 0.9;
// Grain data assumed for a phosphor whose file gives none (the layer result says so).
inline constexpr double kAssumedD50_um = 15.0;
inline constexpr double kAssumedGrainIndex = 1.8;
inline constexpr double kAssumedDensity_g_per_cm3 = 4.0;
// The LED pump's drift with junction temperature (README "LED layer physics", item 8): an InGaN
// LED's peak moves to longer wavelengths as the band gap narrows, roughly +0.03-0.05 nm/K for blue
// and violet chips, and its band widens (from memory; the thermal part of a bulk LED's width,
// 1.8 kT (Schubert, Light-Emitting Diodes, 2nd ed. 2006, ch. 5; from memory), alone gives
// 0.025 nm/K at 450 nm). Used unless the design gives its own ([pump] peak_shift_nm_per_K,
// fwhm_change_nm_per_K).
inline constexpr double kPumpPeakShift_nm_per_K = 0.04;
inline constexpr double kPumpFwhmChange_nm_per_K = 0.03;
// The pumps a design may name (peak at 25 degC): near-UV, violet and blue InGaN LEDs.
inline constexpr double kPumpMinNm = 360.0;
inline constexpr double kPumpMaxNm = 470.0;
// A bare LED chip's diffuse reflectance for light returned to it, used when a design gives a chip
// area but no chip reflectance (from memory, low confidence: GaN on patterned sapphire with a
// mirror below, about 0.7-0.9).
inline constexpr double kChipReflectance = 0.8;

struct LayerComponent {
    std::string label;
    Phosphor phosphor;
    double loading = 0;  // mass fraction of this phosphor in the layer (phosphor + binder)
    std::optional<double> quantum_efficiency;  // overrides the phosphor's QE under the pump
    // Multiplies the QE at 25 degC (the result capped at 1): a calibration's brightness factor
    // (led/layer_calibration.hpp) or the design key brightness_factor.
    double brightness_factor = 1.0;
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
    double binder_index = kSiliconeIndex;
    double outside_index = kOutsideIndex;
    double scattering_asymmetry = kGrainAsymmetry;
    // Multiplies the grains' scattering coefficient mu_s from anomalous diffraction ([layer]
    // scattering_scale; a calibration's scattering scale multiplies it further).
    double scattering_scale = 1.0;
    double reflector_reflectance = kReflectorReflectance;
    double temperature_C = kRoomTemperatureC;
    std::vector<LayerComponent> components;
    // The pump's peak shift and FWHM change per kelvin of junction temperature above 25 degC
    // (a measured pump spectrum is moved and stretched about its peak by the same amounts).
    double pump_peak_shift_nm_per_K = kPumpPeakShift_nm_per_K;
    double pump_fwhm_change_nm_per_K = kPumpFwhmChange_nm_per_K;
    // The junction temperature at the operating point ([operating] junction_temperature_C); none:
    // the junction is at the operating temperature.
    std::optional<double> junction_temperature_C;
    // Package ([package]): the share of the bottom the chip covers and its reflectance; the bottom
    // reflects f R_chip + (1 - f) R_reflector. f = 0 (the default): the reflector's reflectance
    // stands for the whole bottom, chip included, as before chip absorption was modelled.
    double chip_area_fraction = 0;
    double chip_reflectance = kChipReflectance;
    // The top: a flat layer facing the outside medium, or a hemispherical dome of index
    // dome_index (default: the binder's) around it, which the light meets at normal incidence.
    enum class Top { flat, dome } top = Top::flat;
    std::optional<double> dome_index;
    // The layer calibration applied (design key calibration, led/layer_calibration.hpp): its path
    // ("" when none), and what of it was not applied.
    std::string calibration;
    std::vector<std::string> calibration_notes;
};

// The junction temperature when the layer is at `temperature_C`: the design's junction
// temperature at its operating temperature, 25 degC at 25 degC, linear between (and beyond);
// when the operating temperature is 25 degC, the design's junction rise above the layer is kept.
double junction_temperature(const LayerDesign& d, double temperature_C);
// The pump at a junction temperature: the Gaussian of the design with its peak moved by
// peak_shift x (T_j - 25) and its FWHM by fwhm_change x (T_j - 25), or the measured pump moved
// and stretched about its peak alike; photons on the emission grid, sum 1.
Spectrum pump_photons_at(const LayerDesign& d, double junction_C);
// Peak and FWHM of that pump (nm; for a measured pump, of the moved spectrum).
Excitation pump_at(const LayerDesign& d, double junction_C);

// How the transport is solved (not part of a design file: chosen on the command line).
struct LayerSolver {
    enum class Method { two_flux, monte_carlo } method = Method::two_flux;
    std::int64_t photons = 200000;  // Monte Carlo photons (pump photons launched)
    std::uint64_t seed = 1;
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
    // Photon balance per pump photon: 1 = leaked + escaping + lost (non-radiative) + package
    // (absorbed by the package reflector).
    double pump_photons_leaked = 0, photons_escaping = 0, photons_lost = 0, photons_package = 0;
    // Energy balance in W: pump = leaked + converted out + Stokes loss + quantum loss + package loss.
    double pump_power_W = 0, leaked_pump_W = 0, converted_W = 0, stokes_loss_W = 0, quantum_loss_W = 0, package_loss_W = 0;
    std::string method = "two-flux";  // "two-flux" or "monte-carlo"
    std::int64_t photons = 0;         // Monte Carlo photons (0 for two-flux)
    std::uint64_t seed = 0;           // Monte Carlo seed
    double leaked_uv_violet_W = 0;       // leaked power below 420 nm
    // Package and pump at this evaluation (appended outputs, docs/output-schemas.md):
    double junction_temperature_C = kRoomTemperatureC;
    double pump_peak_nm = 0, pump_fwhm_nm = 0;  // the pump at that junction temperature
    double chip_loss_W = 0, photons_chip = 0;   // the part of the package loss absorbed by the chip
    // Shares of the output power below 400 nm (UV) and in 400-500 nm (blue), the bands of the
    // IEC 62471 UV and blue-light hazards (plain power shares, not hazard-weighted).
    double uv_share = 0, blue_share = 0;
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
// the first n generations of re-emitted photons one by one (a check on the exact solution; two-flux only).
LayerResult evaluate_layer(const LayerDesign& design, std::optional<double> temperature_C = std::nullopt,
                           const AssessOptions& options = {}, int generations = 0, const LayerSolver& solver = {});

// The slab as both transport models see it, at a temperature (absorption, scattering, emission,
// QE per phosphor; boundaries), with the warnings about assumed grain data.
LayerMedium layer_medium(const LayerDesign& design, double temperature_C, std::vector<std::string>* warnings = nullptr);

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
LayerEvaluation evaluate_layer_design(const LayerDesign& d, const AssessOptions& options = {}, const LayerSolver& solver = {});

}  // namespace lampwright
