#pragma once
// Decomposing a measured lamp spectrum into phosphor emissions plus visible mercury lines:
// non-negative least squares (Lawson and Hanson 1974) on the measurement's own grid, each model
// spectrum first seen through the instrument's triangular bandpass (core/bandpass.hpp), and,
// optionally, the reconstruction's chromaticity held to the measured one by two linear
// equality rows (X - (x/y) Y = 0 and Z - (z/y) Y = 0 are linear in the amplitudes).
#include "lampwright/core/spectrum.hpp"
#include "lampwright/phosphor/blend.hpp"
#include "lampwright/phosphor/phosphor.hpp"

#include "lampwright/colour/assessment.hpp"
#include "lampwright/phosphor/excitation.hpp"

#include <array>
#include <cstddef>
#include <limits>
#include <string>
#include <vector>

namespace lampwright {

struct UnmixingOptions {
    int bandwidth_nm = 0;              // the instrument's bandpass; 0: the measurement's step
    bool mercury_lines = true;         // free visible mercury line groups
    bool match_chromaticity = true;    // hold the reconstruction's x, y to the measured ones
};

struct UnmixingResult {
    std::vector<double> power;         // W per candidate in the measurement's units (its emission summing to 1 W)
    std::array<double, 4> mercury_power{};  // per line group, same units
    double mercury_visible_fraction = 0;    // mercury lines' share of the 380-780 nm power
    Spectrum model_1nm;                // the reconstruction before the bandpass, on the emission grid
    SampledSpectrum reconstruction;    // at the measured wavelengths, after the bandpass
    double relative_residual = 0;      // ||fit - measured||_2 / ||measured||_2 over the 380-780 nm points
};

// `measured` must lie on a uniform grid of whole nanometres inside the emission grid (a CIE 5 nm
// table, a 1 nm measurement). Throws Error otherwise or when nothing can be fitted.
UnmixingResult unmix_spectrum(const SampledSpectrum& measured, const std::vector<Phosphor>& candidates,
                              const UnmixingOptions& options = {});

// ---------------------------------------------------------------------------------------------
// The inverse of the blend model (lampwright unmix): a measured spectrum decomposed into the
// emission of blend components plus the discharge light (the four visible mercury line groups for
// a 253.7 nm discharge, the pump band for an LED), each seen through the measurement's bandpass;
// then the fitted powers turned back into the mass fractions the forward model (blend.hpp) needs
// to give them. Plain non-negative least squares (Lawson and Hanson 1974) over the 380-780 nm
// points, without the chromaticity rows of unmix_spectrum, so that the residual gives the
// parameters' uncertainty.

struct BlendUnmixingOptions {
    Excitation excitation = Excitation::mercury();
    int bandwidth_nm = 0;       // the instrument's bandpass; 0: the measurement's step
    // Each band emitter (emission model "bands") may move by up to this many nm (an outer BOBYQA
    // search, Powell 2009, NNLS inside); line emitters (Eu3+, Tb3+ f-f lines) and measured spectra
    // do not move. 0: no shift.
    double max_shift_nm = 0;
    // Each band emitter's FWHM (every band of it alike) may change by up to this fraction, in the
    // same search: band widths vary with the host's composition and the temperature (the
    // configurational-coordinate model, Blasse and Grabmaier 1994 ch. 2, from memory). 0: fixed.
    double max_width_change = 0;
    // Subset choice (unmix_blend_choosing): every subset of 1 to this many candidates is tried.
    int max_components = 4;
};

struct UnmixedComponent {
    std::string id;                 // the component's label (library id)
    bool band_emitter = false;      // may shift (emission model "bands")
    double shift_nm = 0;            // as fitted (0 without --shift-nm)
    double width_change = 0;        // relative FWHM change as fitted (0 without --width-pct)
    double power = 0;               // fitted radiant power, in the measurement's units x nm
    double radiant_share = 0;       // share of the phosphors' radiant power
    double emitted_photon_share = 0;  // share of the photons the phosphors emit
    double photon_share = 0;        // s_i: share of the absorbed excitation photons (as blend reports it)
    double mass_fraction = 0;       // w_i the forward model needs for these shares, normalised
    // Standard deviation of w_i (delta method on the NNLS covariance, see unmix_blend); NaN when the
    // component is at its bound (zero), where the linearisation does not hold.
    double mass_fraction_sd = std::numeric_limits<double>::quiet_NaN();
    double quantum_efficiency = 0;  // QE_i of blend_basis
    double share_weight = 0;        // g_i of blend_basis
};

struct BlendUnmixing {
    std::string name;
    Excitation excitation;
    std::vector<UnmixedComponent> components;
    std::array<double, 4> mercury_power{};  // per visible line group (kMercuryLineGroupsNm), measurement units x nm
    double pump_power = 0;                  // LED: the pump band's fitted power
    // The discharge light's share of the reconstruction's 380-780 nm power: the mercury lines for a
    // discharge (blend's mercury_line_fraction), the pump band for an LED.
    double discharge_line_fraction = 0;
    Spectrum model_1nm;                     // the reconstruction before the bandpass
    Spectrum discharge_1nm;                 // its discharge part (mercury lines or pump)
    std::vector<Spectrum> component_1nm;    // each component's part, in component order
    SampledSpectrum reconstruction;         // at the measured wavelengths, after the bandpass
    std::vector<double> measured_values;    // the measurement as given, at the same wavelengths
    SampledSpectrum discharge_reconstruction;              // its discharge part, likewise
    std::vector<SampledSpectrum> component_reconstruction; // each component's part, likewise
    int bandwidth_nm = 0;                   // the bandpass applied (FWHM, nm)
    double relative_residual = 0;           // ||fit - measured||_2 / ||measured||_2 over the 380-780 nm points
    double rss = 0;                         // residual sum of squares, measured scaled to unit L2 norm over 380-780 nm
    double residual_sd = 0;                 // s = sqrt(rss / (n - p_active)), same scale
    int points = 0;                         // n: measured points within 380-780 nm
    int parameters = 0;                     // p: components + discharge amplitudes
    double bic = 0;                         // n ln(RSS/n) + p ln(n) (Schwarz 1978), RSS as `rss`
    bool uncertainty = false;               // false when n <= p_active (no residual degrees of freedom)
    // Subset choice: how the components were found ("given" or the search), and its size.
    std::string selection = "given";
    std::size_t candidates = 0, subsets_tried = 0;
    Assessment measured_assessment, fit_assessment;  // both of the 1 nm resampling of the tables
    std::vector<std::string> notes;
};

// Unmixes `measured` into the given components (their phosphors, and any absorption, QE, density
// and d50 overrides as a recipe gives them; mass fractions are not looked at). Throws Error for a
// spectrum off a uniform whole-nm grid, with no power, or when no component contributes, and for
// components the forward model cannot take (as blend_basis).
BlendUnmixing unmix_blend(const SampledSpectrum& measured, const std::vector<BlendComponent>& components,
                          const BlendUnmixingOptions& options = {});

// The same with the components chosen among `candidates`: every subset of 1..max_components
// candidates is fitted (shifts off), and the one with the smallest BIC = n ln(RSS/n) + p ln(n)
// (Schwarz 1978) is kept, then refitted with the shift search when asked. A residual below 1e-6
// of the signal (the precision of a printed table) counts as 1e-6, so that exact fits of
// different size are told apart by the penalty alone. Candidates the forward model cannot take
// under the excitation (no absorption or QE data, Stokes rule) are left out, with a note.
BlendUnmixing unmix_blend_choosing(const SampledSpectrum& measured, const std::vector<Phosphor>& candidates,
                                   const BlendUnmixingOptions& options = {});

// The library phosphors made for this excitation: use "lamp" for a mercury discharge, "led" for a pump.
std::vector<Phosphor> unmixing_candidates(const std::vector<Phosphor>& library, const Excitation& excitation);

}  // namespace lampwright
