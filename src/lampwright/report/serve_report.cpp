#include "lampwright/report/serve_report.hpp"

#include "lampwright/colour/colorimetry.hpp"
#include "lampwright/colour/temperature.hpp"
#include "lampwright/report/assessment_report.hpp"
#include "lampwright/report/blend_report.hpp"
#include "lampwright/report/layer_report.hpp"
#include "lampwright/report/qc_report.hpp"
#include "lampwright/report/svg_plot.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <array>
#include <cmath>

namespace lampwright {

namespace {

// Okabe and Ito's colour-blind-safe set (Okabe & Ito 2008, "Color Universal Design"), black left
// out for the stack: components take them in order; grey is the mercury lines / leaked pump.
constexpr std::array<const char*, 7> kStackColours{"#E69F00", "#56B4E9", "#009E73", "#F0E442", "#0072B2", "#D55E00", "#CC79A7"};
constexpr const char* kLinesColour = "#999999";

// The visible window of the spectrum chart, nm (CIE 15:2004 visible range, from 360 nm so a
// violet LED pump shows).
constexpr int kChartFirstNm = 360, kChartLastNm = 780, kChartStepNm = 2;

double value_at(const Spectrum& s, int nm) { return s.covers(nm) ? s.values[static_cast<std::size_t>(nm - s.first_nm)] : 0.0; }

// The target's tolerance region as a QC region (qc_report's tolerance_region_uv draws all three).
QcSpec region_spec(const Target& t, double tolerance_uv_prime) {
    QcSpec s;
    s.centre = t.xy;
    if (t.ellipse) {
        s.region = QcSpec::Region::ellipse;
        s.step_ellipse = *t.ellipse;
        s.max_steps = t.ellipse_steps;
    } else if (t.ansi_class) {
        s.region = QcSpec::Region::ansi_quadrangle;
        s.ansi_class = t.ansi_class;
    } else {
        s.region = QcSpec::Region::circle;
        s.max_duv_prime = tolerance_uv_prime;
    }
    return s;
}

}  // namespace

namespace {

// The parts of a light stacked as filled bands (Okabe-Ito colours in order, the last part grey
// when `last_grey`), the total as a black line; y scaled to `y_max` (a mercury line above it is clipped).
std::string stacked_spectrum_svg(const std::vector<std::string>& labels, const std::vector<std::vector<double>>& parts,
                                 const std::vector<double>& total, double y_max, bool last_grey, const std::string& title,
                                 const std::string& y_label) {
    std::vector<double> xs, base(total.size(), 0.0);
    for (int l = kChartFirstNm; l <= kChartLastNm; l += kChartStepNm) xs.push_back(l);
    SvgOverlay ov;
    ov.id = "spectrum-chart";
    ov.legend_width = 190;
    constexpr int kWidth = 700, kHeight = 340;
    const SvgPlotArea area = svg_plot_area(kWidth + ov.legend_width, kHeight, ov.legend_width);
    std::string legend;
    for (std::size_t i = 0; i < parts.size(); ++i) {
        const std::string colour = last_grey && i + 1 == parts.size() ? kLinesColour : kStackColours[i % kStackColours.size()];
        SvgPolygon p;
        for (std::size_t k = 0; k < xs.size(); ++k) p.x.push_back(xs[k]), p.y.push_back(base[k] + parts[i][k]);
        for (std::size_t k = xs.size(); k-- > 0;) p.x.push_back(xs[k]), p.y.push_back(base[k]);
        for (std::size_t k = 0; k < xs.size(); ++k) base[k] += parts[i][k];
        p.fill = colour;
        p.stroke = colour;
        p.stroke_width = 0.5;
        p.fill_opacity = 0.85;
        p.title = labels[i];
        ov.polygons.push_back(std::move(p));
        const int y = area.top + 14 + 18 * static_cast<int>(i);
        const std::string& label = labels[i];
        legend += fmt::format(R"(<rect x="{}" y="{}" width="12" height="12" fill="{}"/><text x="{}" y="{}" font-size="11">{}</text>)", area.right + 12,
                              y - 10, colour, area.right + 30, y, xml_escape(label.size() > 26 ? label.substr(0, 25) + "…" : label));
    }
    ov.pixel_svg = legend;
    SvgAxes axes{title, "wavelength (nm)", y_label, static_cast<double>(kChartFirstNm), static_cast<double>(kChartLastNm), 0.0,
                 y_max > 0 ? y_max : 1.0, kWidth + ov.legend_width, kHeight};
    return svg_chart(axes, {SvgSeries{"", xs, total, "#000000", false}}, ov);
}

std::vector<double> on_chart_grid(const Spectrum& s) {
    std::vector<double> v;
    for (int l = kChartFirstNm; l <= kChartLastNm; l += kChartStepNm) v.push_back(value_at(s, l));
    return v;
}

}  // namespace

std::string blend_stack_svg(const BlendInput& in, const BlendResult& r) {
    // Each component's part: its photon share times its light per unit share (blend.hpp,
    // BlendBasis), scaled so the parts add up to the phosphors' light of evaluate_blend; the rest
    // of the total is the mercury lines or the leaked pump.
    const BlendBasis basis = blend_basis(in);
    const std::vector<double> shares = photon_shares(basis, normalised_mass_fractions(in));
    const std::vector<double> total = on_chart_grid(r.spectrum), phosphors = on_chart_grid(r.phosphor_spectrum);
    std::vector<std::vector<double>> parts;
    std::vector<std::string> labels;
    double parts_sum = 0, phosphor_sum = 0;
    for (std::size_t i = 0; i < shares.size(); ++i) {
        parts.push_back(on_chart_grid(basis.phosphor_light[i]));
        for (double& v : parts.back()) parts_sum += v *= shares[i];
        labels.push_back(in.components[i].label);
    }
    for (double v : phosphors) phosphor_sum += v;
    const double scale = parts_sum > 0 ? phosphor_sum / parts_sum : 0.0;
    for (auto& p : parts)
        for (double& v : p) v *= scale;
    // Scaled to the phosphors' bands: a mercury line may reach far above them and is clipped.
    const double y_max = 1.15 * *std::max_element(phosphors.begin(), phosphors.end());
    std::vector<double> rest(total.size());
    for (std::size_t k = 0; k < total.size(); ++k) rest[k] = std::max(0.0, total[k] - phosphors[k]);
    const bool any_rest = std::any_of(rest.begin(), rest.end(), [&](double v) { return v > 1e-6 * y_max; });
    if (any_rest) {
        parts.push_back(rest);
        labels.push_back(in.excitation.kind == Excitation::Kind::mercury ? "mercury lines" : "leaked pump");
    }
    return stacked_spectrum_svg(labels, parts, total, y_max, any_rest, "Spectrum by component", "spectral power (W/nm per W absorbed)");
}

std::string layer_stack_svg(const LayerEvaluation& e) {
    // The layer model gives the converted light as a whole and the leaked pump (led/layer.hpp).
    const LayerResult& r = e.operating;
    const std::vector<double> total = on_chart_grid(r.spectrum);
    const std::vector<std::vector<double>> parts{on_chart_grid(r.converted_spectrum), on_chart_grid(r.leaked_pump_spectrum)};
    const double y_max = 1.1 * *std::max_element(total.begin(), total.end());
    return stacked_spectrum_svg({"converted light", "leaked pump"}, parts, total, y_max, true, "Spectrum at the operating temperature",
                                fmt::format("spectral power (W/nm at {:g} W pump)", e.design.pump_power_W));
}

std::string target_uv_svg(const Target& t, double tolerance_uv_prime, const Assessment& blend) {
    const std::vector<UV> region = tolerance_region_uv(region_spec(t, tolerance_uv_prime), 48);
    const UV aim = uv_1976_from_xy(t.xy);
    // The window: the region with a margin, widened to hold the blend (up to 0.03 away, beyond it
    // the point is clipped and the readout says where it is). Equal scales in u' and v'.
    double r = 0.004;
    for (const auto& p : region) r = std::max({r, 1.4 * std::abs(p.u - aim.u), 1.4 * std::abs(p.v - aim.v)});
    const UV b = blend.uv_prime;
    if (std::isfinite(b.u) && std::isfinite(b.v)) r = std::max(r, std::min(0.03, 1.2 * std::max(std::abs(b.u - aim.u), std::abs(b.v - aim.v))));
    constexpr int kWidth = 460, kHeight = 460;
    const SvgWindow w = svg_square_window(aim.u, aim.v, r, kWidth, kHeight);
    const double u_min = w.x_min, u_max = w.x_max, v_min = w.y_min, v_max = w.y_max;

    SvgOverlay ov;
    ov.id = "uv-chart";
    // Isotherms: lines of constant CCT from Duv -0.02 to +0.02 (CIE 15:2004 9.5: CCT is defined
    // within |Duv| <= 0.05), every 100 K below 4000 K, every 250 K up to 7000 K, then every 500 K.
    // An isotherm is straight in CIE 1960 (u, v) (the locus normal; CIE 15:2004 9.5), and so in
    // u'v' (v' = 1.5 v): its two ends suffice.
    for (double T = 1500; T <= 12000; T += T < 4000 ? 100 : T < 7000 ? 250 : 500) {
        const UV mid = uv_1976_from_xy(xy_from_cct_duv(T, 0.0));
        if (!(mid.u > u_min && mid.u < u_max && std::abs(mid.v - aim.v) < 3 * r)) continue;
        SvgPolygon iso;
        iso.closed = false;
        for (double d : {-0.02, 0.02}) {
            const UV p = uv_1976_from_xy(xy_from_cct_duv(T, d));
            iso.x.push_back(p.u), iso.y.push_back(p.v);
        }
        iso.stroke = "#777777";
        iso.dash = "3 3";
        iso.stroke_width = 0.8;
        iso.css_class = "isotherm";
        iso.title = fmt::format("isotherm {:.0f} K", T);
        // Labels on every 500 K only (the locus carries its own CCT ticks); the rest as tooltips.
        if (std::fmod(T, 500.0) == 0) {
            const UV top = uv_1976_from_xy(xy_from_cct_duv(T, 0.012));
            ov.texts.push_back({top.u, top.v, fmt::format("{:.0f} K", T), "middle", "#555555", 0, -3});
        }
        ov.polygons.push_back(std::move(iso));
    }
    SvgPolygon reg;
    for (const auto& p : region) reg.x.push_back(p.u), reg.y.push_back(p.v);
    if (!reg.x.empty()) reg.x.pop_back(), reg.y.pop_back();
    reg.id = "tolerance-region";
    reg.stroke = "#0072B2";
    reg.fill = "#56B4E9";
    reg.fill_opacity = 0.25;
    reg.stroke_width = 1.5;
    reg.title = t.ellipse ? fmt::format("{:g}-step MacAdam ellipse", t.ellipse_steps)
                : t.ansi_class ? "ANSI C78.377 quadrangle"
                               : fmt::format("within {:g} in u'v'", tolerance_uv_prime);
    ov.polygons.push_back(std::move(reg));
    ov.markers.push_back({aim.u, aim.v, SvgMarker::Shape::plus, 6, "target-marker", "", "#0072B2", "target: " + t.description});
    if (std::isfinite(b.u) && std::isfinite(b.v))
        ov.markers.push_back({b.u, b.v, SvgMarker::Shape::diamond, 6, "blend-marker", "", "#D55E00",
                              fmt::format("blend: u' {:.4f}, v' {:.4f}", b.u, b.v)});
    return svg_uv_diagram("CIE 1976 u'v' around the target", {}, u_min, u_max, v_min, v_max, kWidth, kHeight, ov);
}

nlohmann::ordered_json target_json(const Target& t, double tolerance_uv_prime, const Assessment& blend) {
    const UV aim = uv_1976_from_xy(t.xy);
    nlohmann::ordered_json j;
    j["description"] = t.description;
    j["x"] = t.xy.x;
    j["y"] = t.xy.y;
    j["u_prime"] = aim.u;
    j["v_prime"] = aim.v;
    j["tolerance"] = t.ellipse ? fmt::format("{:g}-step MacAdam ellipse", t.ellipse_steps) : fmt::format("{:g} in u'v'", tolerance_uv_prime);
    j["distance_uv_prime"] = std::hypot(blend.uv_prime.u - aim.u, blend.uv_prime.v - aim.v);
    j["macadam_steps"] = t.ellipse ? nlohmann::ordered_json(macadam_steps(*t.ellipse, blend.xy)) : nlohmann::ordered_json(nullptr);
    j["inside_ansi_quadrangle"] = t.ansi_class ? nlohmann::ordered_json(inside_ansi_c78377(*t.ansi_class, blend.xy)) : nlohmann::ordered_json(nullptr);
    j["within_tolerance"] = target_distance_ratio2(t, tolerance_uv_prime, blend) <= 1.0;
    return j;
}

nlohmann::ordered_json targets_catalogue_json() {
    nlohmann::ordered_json j;
    auto& ansi = j["ansi_c78377"] = nlohmann::ordered_json::array();
    for (const auto& c : ansi_c78377_classes())
        ansi.push_back({{"nominal_K", c.nominal_K}, {"cct_K", c.cct_K}, {"cct_tolerance_K", c.cct_tolerance_K}, {"duv_centre", c.duv_centre},
                        {"x", c.centre.x}, {"y", c.centre.y}});
    auto& lamps = j["ansi_c78376"] = nlohmann::ordered_json::array();
    for (const auto& c : ansi_c78376_colours())
        lamps.push_back({{"name", c.name}, {"x", c.ellipse.centre.x}, {"y", c.ellipse.centre.y}, {"a", c.ellipse.a}, {"b", c.ellipse.b},
                         {"theta_deg", c.ellipse.theta_deg}, {"source", c.source}});
    j["default_steps"] = kAnsiC78376Steps;
    j["default_tolerance_uv_prime"] = kDefaultFitToleranceUvPrime;
    auto& obj = j["objectives"] = nlohmann::ordered_json::array();
    // The keys of fit --maximize (parse_fit_objective), "change" the default.
    for (const char* key : {"change", "ra", "r9", "ra-r9", "ler", "efficacy", "rf"})
        obj.push_back({{"key", key}, {"label", fit_objective_name(parse_fit_objective(key))}});
    return j;
}

nlohmann::ordered_json serve_layer_evaluation_json(const LayerEvaluation& e, const Target& t, double tolerance_uv_prime) {
    nlohmann::ordered_json j;
    j["layer"] = layer_document_json(e);
    j["target"] = target_json(t, tolerance_uv_prime, e.operating.assessment);
    j["charts"] = {{"spectrum_svg", layer_stack_svg(e)},
                   {"uv_svg", target_uv_svg(t, tolerance_uv_prime, e.operating.assessment)},
                   {"cvg_svg", colour_vector_graphic_svg(e.operating.assessment, "cvg-chart")}};
    return j;
}

nlohmann::ordered_json serve_evaluation_json(const BlendInput& in, const BlendResult& r, const Target& t, double tolerance_uv_prime) {
    nlohmann::ordered_json j;
    j["blend"] = blend_document_json(r, in);
    j["target"] = target_json(t, tolerance_uv_prime, r.assessment);
    j["charts"] = {{"spectrum_svg", blend_stack_svg(in, r)},
                   {"uv_svg", target_uv_svg(t, tolerance_uv_prime, r.assessment)},
                   {"cvg_svg", colour_vector_graphic_svg(r.assessment, "cvg-chart")}};
    return j;
}

}  // namespace lampwright
