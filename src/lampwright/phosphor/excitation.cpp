#include "lampwright/phosphor/excitation.hpp"

#include "lampwright/core/error.hpp"

#include <fmt/format.h>

#include <cmath>

namespace lampwright {

std::string Excitation::describe() const {
    if (kind == Kind::mercury) return "mercury 253.7 nm line";
    return fmt::format("LED pump {:g} nm, FWHM {:g} nm", peak_nm, fwhm_nm);
}

Spectrum pump_photons(const Excitation& e) {
    Spectrum s = emission_grid("pump");
    if (e.kind != Excitation::Kind::led) return s;
    const double sigma = e.fwhm_nm / (2 * std::sqrt(2 * std::log(2.0)));
    double sum = 0;
    for (std::size_t i = 0; i < s.values.size(); ++i) {
        const double nm = s.first_nm + static_cast<double>(i);
        s.values[i] = std::exp(-0.5 * std::pow((nm - e.peak_nm) / sigma, 2));
        sum += s.values[i];
    }
    for (double& v : s.values) v /= sum;
    return s;
}

double mean_inverse_wavelength(const Excitation& e) {
    if (e.kind == Excitation::Kind::mercury) return 1.0 / e.peak_nm;
    return mean_inverse_wavelength(pump_photons(e));
}

double absorption_for(const Phosphor& p, const Excitation& e) {
    if (e.kind == Excitation::Kind::mercury) {
        const auto a = absorption_at(p, e.peak_nm);
        if (!a) throw Error(fmt::format("phosphor '{}' has no absorption data at {:g} nm", p.id, e.peak_nm));
        return *a;
    }
    const Spectrum pump = pump_photons(e);
    double a = 0, covered = 0;
    for (std::size_t i = 0; i < pump.values.size(); ++i) {
        if (pump.values[i] < 1e-6) continue;
        const auto v = absorption_at(p, pump.first_nm + static_cast<double>(i));
        if (!v) throw Error(fmt::format("phosphor '{}' has absorption data for {:g}-{:g} nm only; the {} reaches {:g} nm", p.id,
                                        p.absorption_nm.front(), p.absorption_nm.back(), e.describe(),
                                        pump.first_nm + static_cast<double>(i)));
        a += pump.values[i] * *v;
        covered += pump.values[i];
    }
    return a / covered;
}

double quantum_efficiency_for(const Phosphor& p, const Excitation& e) {
    const auto& qe = e.kind == Excitation::Kind::mercury ? p.qe_254nm : p.qe_365_405nm;
    if (!qe)
        throw Error(fmt::format("phosphor '{}' has no quantum efficiency for the {} (its data: {})", p.id, e.describe(),
                                p.qe_254nm && p.qe_365_405nm ? "254 nm, 365-405 nm" : p.qe_254nm ? "254 nm" : p.qe_365_405nm ? "365-405 nm" : "none"));
    return *qe;
}

}  // namespace lampwright
