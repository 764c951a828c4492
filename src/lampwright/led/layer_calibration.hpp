#pragma once
// Calibrating the LED layer model on measured modules (README, "Calibrating the layer model on
// measured modules").
//
// Trial modules are made to known layer designs and their spectra measured. The layer model's
// spectrum depends on numbers the data files cannot know well: the mass absorption coefficient
// kappa (the design's mass_absorption_cm2_per_g) and the grains' scattering coefficient mu_s from
// anomalous diffraction. Fitted: a scale on each (one per calibration, shared by every trial), per
// phosphor a brightness factor on its quantum efficiency, and per relative spectrum a free scale.
// The leaked pump peak is part of every spectrum and is what pins the absorption down.
//
// Brightness factors: with relative spectra only the ratios of converted light to leaked pump and
// of one phosphor to another are seen, and a common factor on every QE trades against the
// absorbed share (more absorption, lower QE); so one phosphor (the one in most trials) is the
// reference with factor 1. When every trial is absolute (W/nm for the design's pump power) the
// level of the light fixes the QE too, and every phosphor's factor is free. Whether the trials
// really separate the parameters is left to the covariance (design/calibration.hpp), which warns.
//
// Residual per trial, on the measured grid (points within 360-830 nm): the model at the design's
// operating temperature (two-flux transport) through the measurement's bandpass minus the
// measurement; relative trials each normalised to unit L2 norm (the model then x its scale),
// absolute trials both divided by the measurement's norm. Least squares and uncertainties as for
// the lamps (Press et al., Numerical Recipes, 3rd ed. 2007, ch. 15.4-15.5; Bates and Watts 1988).
//
// The calibration file (named by a design as calibration = "cal.toml"):
//   format = "lampwright layer calibration 1"
//   mass_absorption_scale = 1.6
//   mass_absorption_scale_sd = 0.02
//   scattering_scale = 0.7
//   scattering_scale_sd = 0.03
//   reference = "Y3Al5O12:Ce3+"        # optional: the phosphor whose factor is 1 by definition
//   [[phosphor]]
//   id = "CaAlSiN3:Eu2+"
//   brightness_factor = 0.9
//   brightness_factor_sd = 0.01
#include "lampwright/core/spectrum.hpp"
#include "lampwright/design/calibration.hpp"
#include "lampwright/io/toml_access.hpp"
#include "lampwright/led/layer.hpp"

#include <cstddef>
#include <string>
#include <vector>

namespace lampwright {

inline constexpr const char* kLayerCalibrationFormat = "lampwright layer calibration 1";

struct LayerCalibratedPhosphor {
    std::string id;
    double brightness_factor = 1;  // multiplies the phosphor's QE (the result capped at 1)
    double sd = 0;                 // 0 for the reference
};

struct LayerModelCalibration {
    std::string path;  // the file it was read from ("" when made in memory)
    double mass_absorption_scale = 1, mass_absorption_scale_sd = 0;
    double scattering_scale = 1, scattering_scale_sd = 0;
    std::string reference;  // "" when every factor was free (absolute trials)
    std::vector<LayerCalibratedPhosphor> phosphors;
    const LayerCalibratedPhosphor* phosphor(const std::string& id) const;
};

// Reads a layer calibration file; errors (InputError) name the file, the line and the key.
LayerModelCalibration load_layer_calibration(const std::string& path);
LayerModelCalibration layer_calibration_from_toml(const TomlDoc& doc);

// Applies a calibration to a design: kappa x mass_absorption_scale, the scattering scale x
// scattering_scale, each listed phosphor's brightness factor x its factor. Sets
// design.calibration; returns notes on what was not applied (phosphors in none of the trials).
std::vector<std::string> apply_layer_calibration(const LayerModelCalibration& cal, LayerDesign& design);

struct LayerCalibrationTrial {
    std::string label, design_path, spectrum_path;
    LayerDesign design;        // uncalibrated (layer_design_from_toml without its calibration)
    SampledSpectrum measured;  // whole-nm uniform grid covering 380-780 nm, the pump peak included
    bool absolute = false;     // W/nm for the design's pump power; false: relative (a free scale)
};

struct LayerCalibrationOptions {
    CalibrationOptions fit;
    bool brightness = true;  // fit per-phosphor brightness factors
};

class LayerCalibrationProblem : public ResidualProblem {
public:
    // Throws Error for trials it cannot use (no trial, bad grid, no light).
    explicit LayerCalibrationProblem(const std::vector<LayerCalibrationTrial>& trials, const LayerCalibrationOptions& options = {});

    const std::vector<CalibrationParameter>& parameters() const override { return parameters_; }
    std::size_t residual_count() const override { return residual_count_; }
    std::vector<double> residuals(const std::vector<double>& p) const override;
    const std::string& reference() const { return reference_; }
    const std::string& reference_reason() const { return reference_reason_; }
    const std::vector<std::string>& notes() const { return notes_; }

    // Relative L2 residual of each trial.
    std::vector<double> trial_residuals(const std::vector<double>& p) const;
    // Trial t's design with the values p applied, and its model spectrum (1 nm, W/nm, operating temperature).
    LayerDesign design(std::size_t t, const std::vector<double>& p) const;
    Spectrum model_spectrum(std::size_t t, const std::vector<double>& p) const;
    LayerModelCalibration calibration(const std::vector<double>& p, const std::vector<double>& sd) const;

private:
    struct Trial {
        LayerDesign design;
        int scale_index = -1;  // -1: absolute
        std::vector<int> grid_nm;
        std::vector<double> measured;  // divided by its L2 norm
        double norm = 1;               // that norm
        int bandwidth = 1;
        std::size_t first_row = 0;
    };
    std::vector<Trial> trials_;
    std::vector<CalibrationParameter> parameters_;
    std::size_t residual_count_ = 0;
    int kappa_index_ = -1, scattering_index_ = -1;
    std::string reference_, reference_reason_;
    std::vector<std::string> notes_;
};

struct LayerCalibrationResult {
    LeastSquaresFit fit;
    std::vector<CalibrationTrialResult> trials;  // recipe_path holds the design's path
    std::vector<bool> absolute;                  // per trial
    std::string reference, reference_reason;
    LayerModelCalibration calibration;
    std::vector<std::string> warnings;           // the problem's notes, then the fit's
};

LayerCalibrationResult calibrate_layer_model(const std::vector<LayerCalibrationTrial>& trials, const LayerCalibrationOptions& options = {});

}  // namespace lampwright
