#include "lampwright/report/assessment_report.hpp"

#include <fmt/format.h>

#include <cmath>

namespace lampwright {

namespace {


const char* reference_name(ReferenceIlluminant r) { return r == ReferenceIlluminant::planckian ? "planckian" : "daylight"; }
const char* observer_name(Observer o) { return o == Observer::cie1931_2deg ? "2" : "10"; }

}  // namespace

std::string photometry_text(const Assessment& a) {
    if (!a.absolute || !a.luminous_flux_lm) return "  luminous flux              relative spectrum: no flux\n";
    std::string o = fmt::format("  luminous flux              {:.1f} lm", *a.luminous_flux_lm);
    if (a.efficacy_lm_per_W)
        o += fmt::format("   efficacy {:.1f} lm/W at {:.2f} W", *a.efficacy_lm_per_W, *a.electrical_power_W);
    else
        o += "   efficacy n/a (no electrical power: --power-W or power_W in the file)";
    return o + "\n";
}

std::vector<std::string> assessment_columns() {
    std::vector<std::string> c{"name", "x", "y", "u_prime", "v_prime", "cct_K", "duv", "Ra"};
    for (int i = 1; i <= 14; ++i) c.push_back(fmt::format("R{}", i));
    for (const char* k : {"ler_lm_per_W", "X", "Y", "Z", "u_1960", "v_1960", "dc", "reference", "peak_nm", "centroid_nm",
                          "fwhm_nm", "dominant_nm", "purity", "observer",
                          // absolute photometry (appended, so earlier columns keep their places)
                          "photometry", "luminous_flux_lm", "electrical_power_W", "efficacy_lm_per_W"})
        c.push_back(k);
    return c;
}

std::vector<std::string> assessment_values(const Assessment& a) {
    std::vector<std::string> v{a.name, format_fixed(a.xy.x, 5), format_fixed(a.xy.y, 5), format_fixed(a.uv_prime.u, 5), format_fixed(a.uv_prime.v, 5)};
    v.push_back(a.cct.valid ? format_fixed(a.cct.cct_K, 1) : "");
    v.push_back(format_fixed(a.cct.duv, 5));
    if (a.rendering) {
        v.push_back(format_fixed(a.rendering->ra, 2));
        for (double r : a.rendering->ri) v.push_back(format_fixed(r, 2));
    } else {
        v.insert(v.end(), 15, "");
    }
    v.push_back(format_fixed(a.ler_lm_per_W, 2));
    // X, Y, Z scaled to Y = 100; the ratio first, so tristimulus values near the largest double
    // (a spectrum in odd units) do not overflow in 100 * X.
    const double y = a.xyz.Y;
    v.push_back(format_fixed(100 * (a.xyz.X / y), 4));
    v.push_back(format_fixed(100.0, 4));
    v.push_back(format_fixed(100 * (a.xyz.Z / y), 4));
    v.push_back(format_fixed(a.uv1960.u, 5));
    v.push_back(format_fixed(a.uv1960.v, 5));
    v.push_back(a.rendering ? format_fixed(a.rendering->dc, 5) : "");
    v.push_back(a.rendering ? reference_name(a.rendering->reference) : "");
    v.push_back(format_fixed(a.features.peak_nm, 1));
    v.push_back(format_fixed(a.features.centroid_nm, 1));
    v.push_back(format_fixed(a.features.fwhm_nm, 1));
    v.push_back(format_fixed(a.features.dominant_nm, 1));
    v.push_back(format_fixed(a.features.purity, 4));
    v.push_back(observer_name(a.observer));
    v.push_back(a.absolute ? "absolute" : "relative");
    v.push_back(a.luminous_flux_lm ? format_fixed(*a.luminous_flux_lm, 3) : "");
    v.push_back(a.electrical_power_W ? format_fixed(*a.electrical_power_W, 3) : "");
    v.push_back(a.efficacy_lm_per_W ? format_fixed(*a.efficacy_lm_per_W, 2) : "");
    return v;
}

nlohmann::ordered_json assessment_json(const Assessment& a) {
    const auto cols = assessment_columns();
    const auto vals = assessment_values(a);
    nlohmann::ordered_json j;
    for (std::size_t i = 0; i < cols.size(); ++i) {
        const auto& c = cols[i];
        if (c == "name" || c == "reference" || c == "observer" || c == "photometry") {
            j[c] = vals[i].empty() ? nlohmann::ordered_json(nullptr) : nlohmann::ordered_json(vals[i]);
        } else {
            j[c] = vals[i].empty() ? nlohmann::ordered_json(nullptr) : nlohmann::ordered_json(std::stod(vals[i]));
        }
    }
    j["warnings"] = a.warnings;
    return j;
}

std::string assessment_text(const Assessment& a) {
    std::string o = fmt::format("{}\n", a.name);
    const char* obs = a.observer == Observer::cie1931_2deg ? "CIE 1931 2°" : "CIE 1964 10°";
    o += fmt::format("  chromaticity ({})    x {:.4f}  y {:.4f}   u' {:.4f}  v' {:.4f}\n", obs, a.xy.x, a.xy.y, a.uv_prime.u,
                     a.uv_prime.v);
    if (a.cct.valid)
        o += fmt::format("  CCT                        {} K   Duv {}\n", format_fixed(a.cct.cct_K, 0), format_signed(a.cct.duv, 4));
    else
        o += fmt::format("  CCT                        none: {}\n", a.cct.problem);
    if (a.rendering) {
        const auto& r = *a.rendering;
        o += fmt::format("  colour rendering (CIE 13.3) Ra {}   reference: {} {:.0f} K, DC {:.4f}\n", format_fixed(r.ra, 1),
                         reference_name(r.reference), r.reference_cct_K, r.dc);
        o += "                             ";
        for (int i = 0; i < 14; ++i) {
            o += fmt::format("R{} {}", i + 1, format_fixed(r.ri[i], 0));
            o += (i == 6) ? "\n                             " : (i == 13 ? "\n" : "  ");
        }
    }
    o += fmt::format("  LER                        {:.1f} lm/W\n", a.ler_lm_per_W);
    o += photometry_text(a);
    const auto& f = a.features;
    // "n/a" alone, never "n/a nm".
    o += fmt::format("  peak {:.1f} nm   centroid {:.1f} nm   FWHM {}\n", f.peak_nm, f.centroid_nm,
                     std::isfinite(f.fwhm_nm) ? format_fixed(f.fwhm_nm, 1) + " nm" : "n/a");
    if (std::isfinite(f.dominant_nm))
        o += fmt::format("  dominant wavelength {:.1f} nm{}   excitation purity {:.3f} (against E)\n", std::abs(f.dominant_nm),
                         f.dominant_nm < 0 ? " (complementary)" : "", f.purity);
    for (const auto& w : a.warnings) o += wrap_text(w, 100, "  note: ", "        ");
    return o;
}

}  // namespace lampwright
