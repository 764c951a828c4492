#include "lampwright/report/assessment_report.hpp"

#include "lampwright/report/svg_plot.hpp"

#include <fmt/format.h>

#include <cmath>
#include <numbers>

namespace lampwright {

namespace {


const char* reference_name(ReferenceIlluminant r) { return r == ReferenceIlluminant::planckian ? "planckian" : "daylight"; }
const char* observer_name(Observer o) { return o == Observer::cie1931_2deg ? "2" : "10"; }

const char* fidelity_reference_name(FidelityReference r) {
    switch (r) {
        case FidelityReference::planckian: return "planckian";
        case FidelityReference::mix: return "mix";
        case FidelityReference::daylight: return "daylight";
    }
    return "";
}

}  // namespace

std::vector<std::string> fidelity_columns(bool ces) {
    std::vector<std::string> c{"Rf", "Rg"};
    for (const char* k : {"Rf_h", "Rcs_h", "Rhs_h"})
        for (int j = 1; j <= kTm30HueBins; ++j) c.push_back(fmt::format("{}{}", k, j));
    for (const char* k : {"x10", "y10", "fidelity_reference", "fidelity_interval_nm"}) c.push_back(k);
    if (ces)
        for (int i = 1; i <= kCesCount; ++i) c.push_back(fmt::format("Rf_ces{:02d}", i));
    return c;
}

std::vector<std::string> fidelity_values(const Assessment& a, bool ces) {
    std::vector<std::string> v;
    if (!a.fidelity) {
        v.assign(fidelity_columns(ces).size(), "");
        return v;
    }
    const auto& f = *a.fidelity;
    v.push_back(format_fixed(f.rf, 2));
    v.push_back(format_fixed(f.rg, 2));
    for (double x : f.rf_h) v.push_back(format_fixed(x, 2));
    for (double x : f.rcs_h_percent) v.push_back(format_fixed(x, 2));
    for (double x : f.rhs_h) v.push_back(format_fixed(x, 4));
    v.push_back(format_fixed(f.xy10.x, 5));
    v.push_back(format_fixed(f.xy10.y, 5));
    v.push_back(fidelity_reference_name(f.reference));
    v.push_back(std::to_string(f.interval_nm));
    if (ces)
        for (double x : f.rf_ces) v.push_back(format_fixed(x, 2));
    return v;
}

void add_fidelity_json(nlohmann::ordered_json& j, const Assessment& a, bool ces) {
    nlohmann::ordered_json warnings = j.contains("warnings") ? j["warnings"] : nlohmann::ordered_json::array();
    j.erase("warnings");
    const auto cols = fidelity_columns(ces);
    const auto vals = fidelity_values(a, ces);
    for (std::size_t i = 0; i < cols.size(); ++i) {
        if (vals[i].empty()) j[cols[i]] = nullptr;
        else if (cols[i] == "fidelity_reference") j[cols[i]] = vals[i];
        else if (cols[i] == "fidelity_interval_nm") j[cols[i]] = std::stoi(vals[i]);
        else j[cols[i]] = std::stod(vals[i]);
    }
    j["warnings"] = std::move(warnings);
}

std::vector<std::string> fidelity_summary_columns() { return {"Rf", "Rg"}; }

std::vector<std::string> fidelity_summary_values(const Assessment& a) {
    if (!a.fidelity) return {"", ""};
    return {format_fixed(a.fidelity->rf, 2), format_fixed(a.fidelity->rg, 2)};
}

void add_fidelity_summary_json(nlohmann::ordered_json& j, const Assessment& a) {
    const auto cols = fidelity_summary_columns();
    const auto vals = fidelity_summary_values(a);
    for (std::size_t i = 0; i < cols.size(); ++i) j[cols[i]] = vals[i].empty() ? nlohmann::ordered_json(nullptr) : nlohmann::ordered_json(std::stod(vals[i]));
}

std::string fidelity_text(const Assessment& a) {
    if (!a.fidelity) return "";
    const auto& f = *a.fidelity;
    std::string ref = fmt::format("{} {:.0f} K", fidelity_reference_name(f.reference), f.reference_cct_K);
    if (f.reference == FidelityReference::mix) ref += fmt::format(" ({:.0f} % daylight)", 100 * f.daylight_weight);
    return fmt::format("  colour fidelity (CIE 224)  Rf {}   Rg {} (TM-30-20)   reference: {}; 10°, {} nm\n", format_fixed(f.rf, 1),
                       format_fixed(f.rg, 1), ref, f.interval_nm);
}

namespace {

constexpr int kCvgSize = 460;  // one panel of the colour vector graphic, px

// One panel of the TM-30-20 colour vector graphic (the assessment has TM-30 figures), moved down by y0.
std::string colour_vector_graphic_panel(const Assessment& a, int y0) {
    // TM-30-20 colour vector graphic, normalised: each bin's reference average is put on the unit
    // circle at its own hue, and the test average is moved from there by the bin's (da', db')
    // divided by the reference average's radius.
    constexpr int kSize = kCvgSize;
    constexpr double kCentre = kSize / 2.0, kRadius = 150;
    const auto px = [&](double u) { return kCentre + kRadius * u; };
    const auto py = [&](double v) { return kCentre - kRadius * v; };
    {
        const auto& f = *a.fidelity;
        std::string g = fmt::format(R"s(<g transform="translate(0,{})">)s", y0) + "\n";
        g += fmt::format(R"s(<rect x="0" y="0" width="{0}" height="{0}" fill="#fff" stroke="#999"/>)s", kSize) + "\n";
        g += fmt::format(R"s(<text x="10" y="20" font-family="sans-serif" font-size="13">{}</text>)s", xml_escape(a.name)) + "\n";
        // The bins' sector lines and numbers, faint.
        for (int j = 0; j < kTm30HueBins; ++j) {
            const double t0 = j * 2 * std::numbers::pi / kTm30HueBins, tm = (j + 0.5) * 2 * std::numbers::pi / kTm30HueBins;
            g += fmt::format(R"s(<line x1="{:.1f}" y1="{:.1f}" x2="{:.1f}" y2="{:.1f}" stroke="#ddd"/>)s", px(0), py(0), px(1.35 * std::cos(t0)),
                             py(1.35 * std::sin(t0))) + "\n";
            g += fmt::format(R"s(<text x="{:.1f}" y="{:.1f}" font-family="sans-serif" font-size="10" fill="#777" text-anchor="middle">{}</text>)s",
                             px(1.42 * std::cos(tm)), py(1.42 * std::sin(tm)) + 3, j + 1) + "\n";
        }
        g += fmt::format(R"s(<circle cx="{:.1f}" cy="{:.1f}" r="{:.1f}" fill="none" stroke="#888" stroke-dasharray="5 3"/>)s", px(0), py(0),
                         kRadius) + "\n";
        std::string poly;
        for (int j = 0; j < kTm30HueBins; ++j) {
            if (f.ces_in_bin[j] == 0) continue;
            const double r = std::hypot(f.reference_a[j], f.reference_b[j]);
            const double ux = f.reference_a[j] / r, uy = f.reference_b[j] / r;
            const double tx = ux + (f.test_a[j] - f.reference_a[j]) / r, ty = uy + (f.test_b[j] - f.reference_b[j]) / r;
            poly += fmt::format("{:.1f},{:.1f} ", px(tx), py(ty));
            // One arrow per bin, from the reference to the test average.
            const double ang = std::atan2(py(ty) - py(uy), px(tx) - px(ux)), len = std::hypot(px(tx) - px(ux), py(ty) - py(uy));
            g += fmt::format(R"s(<line x1="{:.1f}" y1="{:.1f}" x2="{:.1f}" y2="{:.1f}" stroke="#1f5f8b" stroke-width="1.5"/>)s", px(ux), py(uy),
                             px(tx), py(ty)) + "\n";
            if (len > 4) {
                const double h = 6;
                g += fmt::format(R"s(<polygon points="{:.1f},{:.1f} {:.1f},{:.1f} {:.1f},{:.1f}" fill="#1f5f8b"/>)s", px(tx), py(ty),
                                 px(tx) - h * std::cos(ang - 0.4), py(ty) - h * std::sin(ang - 0.4), px(tx) - h * std::cos(ang + 0.4),
                                 py(ty) - h * std::sin(ang + 0.4)) + "\n";
            }
        }
        g += fmt::format(R"s(<polygon points="{}" fill="#1f5f8b" fill-opacity="0.08" stroke="#222" stroke-width="1.5"/>)s", poly) + "\n";
        // Figures in the corner.
        const std::string lines[] = {fmt::format("Rf {}", format_fixed(f.rf, 0)), fmt::format("Rg {}", format_fixed(f.rg, 0)),
                                     a.cct.valid ? fmt::format("CCT {} K", format_fixed(a.cct.cct_K, 0)) : std::string("CCT n/a"),
                                     fmt::format("Duv {}", format_signed(a.cct.duv, 4))};
        for (int k = 0; k < 4; ++k)
            g += fmt::format(R"s(<text x="{}" y="{}" font-family="sans-serif" font-size="12" text-anchor="end">{}</text>)s", kSize - 10,
                             kSize - 64 + 16 * k, lines[k]) + "\n";
        g += fmt::format(R"s(<text x="10" y="{}" font-family="sans-serif" font-size="10" fill="#555">dashed: reference; solid: test (TM-30-20, CAM02-UCS)</text>)s",
                         kSize - 10) + "\n";
        return g + "</g>\n";
    }
}

}  // namespace

std::string colour_vector_graphic_svg(const std::vector<Assessment>& assessments) {
    std::string body;
    int y0 = 0;
    for (const auto& a : assessments) {
        if (!a.fidelity) continue;
        body += colour_vector_graphic_panel(a, y0);
        y0 += kCvgSize;
    }
    return fmt::format(R"s(<svg xmlns="http://www.w3.org/2000/svg" width="{0}" height="{1}" viewBox="0 0 {0} {1}">)s", kCvgSize,
                       std::max(y0, 1)) + "\n" + body + "</svg>\n";
}

std::string colour_vector_graphic_svg(const Assessment& a, const std::string& id) {
    if (!a.fidelity) return "";
    return fmt::format(R"s(<svg xmlns="http://www.w3.org/2000/svg" id="{1}" class="chart cvg" width="{0}" height="{0}" viewBox="0 0 {0} {0}">)s", kCvgSize,
                       xml_escape(id)) + "\n" + colour_vector_graphic_panel(a, 0) + "</svg>\n";
}

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
    o += fidelity_text(a);
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
