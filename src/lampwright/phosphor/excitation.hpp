#pragma once
// What excites the phosphors: the 253.7 nm mercury resonance line of a low-pressure discharge
// (IUPAC Gold Book) or a UV/violet LED pump modelled as a Gaussian in wavelength (peak, FWHM).
#include "lampwright/phosphor/phosphor.hpp"
#include "lampwright/core/spectrum.hpp"

#include <string>

namespace lampwright {

inline constexpr double kMercuryResonanceNm = 253.7;

struct Excitation {
    enum class Kind { mercury, led } kind = Kind::mercury;
    double peak_nm = kMercuryResonanceNm;
    double fwhm_nm = 0;  // LED only

    static Excitation mercury() { return {}; }
    static Excitation led(double peak_nm, double fwhm_nm) { return {Kind::led, peak_nm, fwhm_nm}; }
    std::string describe() const;
};

// Pump photon distribution on the emission grid, summing to one (LED only).
Spectrum pump_photons(const Excitation& e);
// Mean of 1/lambda (1/nm) over the exciting photons: photon energy = h c <1/lambda>.
double mean_inverse_wavelength(const Excitation& e);

// Relative absorption of a phosphor for this excitation (the pump-photon-weighted mean for an
// LED). Throws Error when the phosphor's absorption data do not cover the excitation.
double absorption_for(const Phosphor& p, const Excitation& e);
// Internal quantum efficiency for this excitation; throws Error when the phosphor has none.
double quantum_efficiency_for(const Phosphor& p, const Excitation& e);

}  // namespace lampwright
