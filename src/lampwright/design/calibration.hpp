#pragma once
// Calibrating the blend model on trial lamps (README, "Calibrating the model on trial lamps").
//
// Trial lamps are made to known recipes and measured. The model's spectrum of each trial depends
// on parameters of the coating line that the data files cannot know: per phosphor an effective
// absorption (brightness) factor f_i, which multiplies its absorbed-share weight g_i (so
// s_i = w_i f_i g_i / sum_j w_j f_j g_j), and per lamp type the visible mercury-line fraction.
// The shares are relative, so one phosphor (the reference) keeps f = 1. Each trial spectrum also
// has a free scale (measured spectra are relative). The parameters are fitted by least squares on
// the spectra: residual = model seen through the measurement's bandpass (a triangle of the grid
// step's width, core/bandpass.hpp) on the measured grid over 380-780 nm, minus the measurement,
// each normalised to unit L2 norm there. Uncertainties: cov = s^2 (J^T J)^-1, s^2 = RSS / (n - p),
// J the Jacobian at the optimum (Press et al., Numerical Recipes, 3rd ed. 2007, ch. 15.4-15.5;
// Bates and Watts, Nonlinear Regression Analysis and Its Applications, 1988, ch. 2).
#include "lampwright/core/spectrum.hpp"
#include "lampwright/phosphor/blend.hpp"
#include "lampwright/phosphor/calibration_file.hpp"

#include <cstddef>
#include <string>
#include <vector>

namespace lampwright {

struct CalibrationTrial {
    std::string label;           // shown in reports
    std::string recipe_path, spectrum_path;
    BlendInput blend;            // the recipe, uncalibrated (load_recipe_without_calibration)
    SampledSpectrum measured;    // whole-nm uniform grid covering 380-780 nm
};

struct CalibrationOptions {
    double max_correlation = 0.95;    // |correlation| above which two parameters are called inseparable
    double min_relative_eigenvalue = 1e-8;  // of the scaled information matrix: below it, near singular
    int bandwidth_nm = 0;             // 0: each measurement's grid step
};

// The last three are the LED layer model's (led/layer_calibration.hpp): a scale on the mass
// absorption coefficient kappa, a scale on the grains' scattering coefficient, and per phosphor a
// brightness (quantum-efficiency) factor.
enum class CalibrationParameterKind { absorption_factor, line_fraction, scale, mass_absorption_scale, scattering_scale, brightness_factor };

struct CalibrationParameter {
    CalibrationParameterKind kind;
    std::string name;        // phosphor id, lamp type, or trial label
    double lower = 0, upper = 0, start = 0;
    double value = 0, sd = 0;  // after the fit; sd NaN when the trials do not determine it
    std::string describe() const;  // "absorption factor of LaPO4:Ce3+,Tb3+", "mercury-line fraction (tri-band)", "scale of trial T1"
};

// A measured spectrum's wavelengths as whole nm within the emission grid, with their uniform
// step; throws Error (naming the trial) otherwise.
struct CalibrationGrid {
    std::vector<int> nm;
    int step = 0;
};
CalibrationGrid measurement_grid(const SampledSpectrum& measured, const std::string& label);

// The L2 norm of each consecutive block of `sizes` rows of r (a trial's residual).
std::vector<double> block_norms(const std::vector<double>& r, const std::vector<std::size_t>& sizes);

// A least-squares problem for the solver (fit_least_squares): bounded parameters and a residual
// vector. The lamp problem (CalibrationProblem) and the LED layer problem (LayerCalibrationProblem,
// led/layer_calibration.hpp) both are one.
class ResidualProblem {
public:
    virtual ~ResidualProblem() = default;
    virtual const std::vector<CalibrationParameter>& parameters() const = 0;
    virtual std::size_t residual_count() const = 0;
    // Residuals (length residual_count) at parameter values p (length parameters().size()).
    virtual std::vector<double> residuals(const std::vector<double>& p) const = 0;
};

// What the solver gives: the parameters with value and sd (NaN when undetermined), their
// correlations, the sums and the warnings about inseparable or undetermined parameters.
struct LeastSquaresFit {
    std::vector<CalibrationParameter> parameters;
    std::vector<double> values, sd;
    std::vector<std::vector<double>> correlation;  // NaN where undetermined
    double rss = 0;
    std::size_t n = 0, p = 0;
    double s2 = 0;
    int evaluations = 0;
    std::string solver;
    std::vector<std::string> warnings;
};

// Levenberg-Marquardt (Eigen's unsupported module, More 1978) with bounds by a change of variable,
// from the parameters' start values; then cov = s^2 (J^T J)^-1 at the optimum, inverted on the
// eigenbasis of the scaled information matrix so that near-singular directions are named.
LeastSquaresFit fit_least_squares(const ResidualProblem& problem, const CalibrationOptions& options = {});

// The least-squares problem: parameters with bounds, and the residual function. Kept apart from
// the solver (calibrate_model), so that tests can evaluate it at known parameters.
class CalibrationProblem : public ResidualProblem {
public:
    // Throws Error for trials it cannot use (no trial, LED pump, bad grid, nothing absorbs).
    CalibrationProblem(const std::vector<CalibrationTrial>& trials, const CalibrationOptions& options = {});

    const std::vector<CalibrationParameter>& parameters() const override { return parameters_; }
    std::size_t residual_count() const override { return residual_count_; }
    const std::string& reference() const { return reference_; }
    const std::string& reference_reason() const { return reference_reason_; }
    const std::vector<std::string>& notes() const { return notes_; }  // set up: parameters the trials cannot determine, ...

    // Residuals (length residual_count) at parameter values p (length parameters().size()).
    std::vector<double> residuals(const std::vector<double>& p) const override;
    // Relative L2 residual of each trial (its rows' norm; the measurement has norm 1).
    std::vector<double> trial_residuals(const std::vector<double>& p) const;
    // The 1 nm model spectrum of trial t (before bandpass and scale).
    Spectrum model_spectrum(std::size_t t, const std::vector<double>& p) const;
    // The calibration these values stand for (the reference at 1, every fitted factor and line fraction).
    ModelCalibration calibration(const std::vector<double>& p, const std::vector<double>& sd) const;

private:
    struct Trial {
        BlendInput blend;
        std::vector<double> mass_fraction;       // normalised
        std::vector<double> base_absorption;     // the recipe's or the data's, at 254 nm
        std::vector<int> factor_index;           // parameter of each component's factor, -1 the reference
        int line_index = -1;
        int scale_index = -1;
        std::vector<int> grid_nm;                // 380-780 nm points of the measurement
        std::vector<double> measured;            // normalised to unit L2 norm over them
        int bandwidth = 1;
        std::size_t first_row = 0;
    };
    std::vector<Trial> trials_;
    std::vector<CalibrationParameter> parameters_;
    std::size_t residual_count_ = 0;
    std::string reference_, reference_reason_;
    std::vector<std::string> notes_;
    void trial_residuals_into(std::size_t t, const std::vector<double>& p, double* out) const;
};

struct CalibrationTrialResult {
    std::string label, recipe_path, spectrum_path;
    double residual = 0;     // relative L2 over 380-780 nm
    std::size_t points = 0;
};

struct CalibrationResult {
    std::vector<CalibrationParameter> parameters;  // fitted values and sd
    std::vector<std::vector<double>> correlation;  // between the parameters (NaN where undetermined)
    std::vector<CalibrationTrialResult> trials;
    std::string reference, reference_reason;
    ModelCalibration calibration;
    double rss = 0;            // residual sum of squares
    std::size_t n = 0, p = 0;  // residuals, parameters
    double s2 = 0;             // RSS / (n - p)
    int evaluations = 0;
    std::string solver;        // the method and how it ended
    std::vector<std::string> warnings;  // inseparable or undetermined parameters, ...
};

// Fits the problem (Levenberg-Marquardt, Eigen's unsupported module, with bounds by a change of
// variable) and computes the covariance. Throws Error when the trials cannot be used.
CalibrationResult calibrate_model(const std::vector<CalibrationTrial>& trials, const CalibrationOptions& options = {});

}  // namespace lampwright
