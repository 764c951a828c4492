#include "lampwright/report/qc_report.hpp"

#include "lampwright/core/format.hpp"
#include "lampwright/report/assessment_report.hpp"
#include "lampwright/phosphor/recipe.hpp"
#include "lampwright/report/svg_plot.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <array>
#include <cmath>
#include <numbers>

namespace lampwright {

namespace {

constexpr const char* kPassColour = "#2ca02c";
constexpr const char* kFailColour = "#d62728";

// The usual cautions of the trade (the same points as the README and the command's --help).
constexpr const char* kCautions =
    "Cautions: fluorescent lamps contain mercury (handle breakage and disposal as local rules require); "
    "phosphor powders are a dust hazard (avoid inhaling; use extraction and a suitable mask); "
    "UV sources used to excite samples injure eyes and skin (shield them, wear UV-rated eyewear); "
    "lamp circuits carry mains voltage. These figures do not certify a product: follow local codes, "
    "the applicable safety standards and licensed practice.";


double ra_of(const LampResult& l) { return l.assessment.rendering ? l.assessment.rendering->ra : NAN; }
double r9_of(const LampResult& l) { return l.assessment.rendering ? l.assessment.rendering->ri[8] : NAN; }
double rf_of(const LampResult& l) { return l.assessment.fidelity ? l.assessment.fidelity->rf : NAN; }
double rg_of(const LampResult& l) { return l.assessment.fidelity ? l.assessment.fidelity->rg : NAN; }
double cct_of(const LampResult& l) { return l.assessment.cct.valid ? l.assessment.cct.cct_K : NAN; }

std::string join(const std::vector<std::string>& v, const std::string& sep) {
    std::string o;
    for (std::size_t i = 0; i < v.size(); ++i) o += (i ? sep : "") + v[i];
    return o;
}

// How a summarised quantity is named and printed: the decimals every text output uses for it (x, y
// and Duv 4, CCT whole kelvin, Ra and R9 1; a standard deviation gets one more).
struct QuantityFormat {
    const char* label;
    int decimals;
};
QuantityFormat quantity_format(const std::string& q) {
    if (q == "x" || q == "y") return {q == "x" ? "x" : "y", 4};
    if (q == "cct_K") return {"CCT (K)", 0};
    if (q == "duv") return {"Duv", 4};
    if (q == "Ra") return {"Ra", 1};
    if (q == "R9") return {"R9", 1};
    if (q == "steps") return {"MacAdam steps", 2};
    if (q == "flux_lm") return {"flux (lm)", 1};
    if (q == "efficacy_lm_per_W") return {"efficacy lm/W", 1};
    if (q == "Rf") return {"Rf", 1};
    if (q == "Rg") return {"Rg", 1};
    return {"?", 4};
}

bool is_photometric(const std::string& q) { return q == "flux_lm" || q == "efficacy_lm_per_W"; }

const char* region_name(QcSpec::Region r) {
    switch (r) {
        case QcSpec::Region::ellipse: return "ellipse";
        case QcSpec::Region::ansi_quadrangle: return "ansi_quadrangle";
        case QcSpec::Region::circle: return "circle";
    }
    return "?";
}

std::string region_text(const QcSpec& s) {
    switch (s.region) {
        case QcSpec::Region::ellipse: return fmt::format("{:g}-step MacAdam ellipse", s.max_steps);
        case QcSpec::Region::ansi_quadrangle:
            return s.ansi_class ? fmt::format("ANSI C78.377 {} K quadrangle ({:g} ± {:g} K, Duv {} ± {:g})", s.ansi_class->nominal_K,
                                              s.ansi_class->cct_K, s.ansi_class->cct_tolerance_K, format_signed(s.ansi_class->duv_centre, 4),
                                              kAnsiC78377DuvTolerance)
                                : "ANSI C78.377 quadrangle";
        case QcSpec::Region::circle: return fmt::format("circle of radius {:g} in u'v'", s.max_duv_prime);
    }
    return "";
}

std::string limits_text(const QcSpec& s) {
    std::vector<std::string> l;
    if (s.ra_min) l.push_back(fmt::format("Ra ≥ {:g}", *s.ra_min));
    if (s.r9_min) l.push_back(fmt::format("R9 ≥ {:g}", *s.r9_min));
    if (s.cct_min_K && s.cct_max_K) l.push_back(fmt::format("CCT {:g}-{:g} K", *s.cct_min_K, *s.cct_max_K));
    else if (s.cct_min_K) l.push_back(fmt::format("CCT ≥ {:g} K", *s.cct_min_K));
    else if (s.cct_max_K) l.push_back(fmt::format("CCT ≤ {:g} K", *s.cct_max_K));
    if (s.duv_min && s.duv_max) l.push_back(fmt::format("Duv {:+g} to {:+g}", *s.duv_min, *s.duv_max));
    else if (s.duv_min) l.push_back(fmt::format("Duv ≥ {:+g}", *s.duv_min));
    else if (s.duv_max) l.push_back(fmt::format("Duv ≤ {:+g}", *s.duv_max));
    if (s.flux_min_lm && s.flux_max_lm) l.push_back(fmt::format("flux {:g}-{:g} lm", *s.flux_min_lm, *s.flux_max_lm));
    else if (s.flux_min_lm) l.push_back(fmt::format("flux ≥ {:g} lm", *s.flux_min_lm));
    else if (s.flux_max_lm) l.push_back(fmt::format("flux ≤ {:g} lm", *s.flux_max_lm));
    if (s.efficacy_min_lm_per_W) l.push_back(fmt::format("efficacy ≥ {:g} lm/W", *s.efficacy_min_lm_per_W));
    if (s.rf_min) l.push_back(fmt::format("Rf ≥ {:g}", *s.rf_min));
    if (s.rg_min && s.rg_max) l.push_back(fmt::format("Rg {:g}-{:g}", *s.rg_min, *s.rg_max));
    else if (s.rg_min) l.push_back(fmt::format("Rg ≥ {:g}", *s.rg_min));
    else if (s.rg_max) l.push_back(fmt::format("Rg ≤ {:g}", *s.rg_max));
    for (std::size_t j = 0; j < s.rf_h_min.size(); ++j) {
        if (s.rf_h_min[j]) l.push_back(fmt::format("Rf,h{} ≥ {:g}", j + 1, *s.rf_h_min[j]));
        const auto &lo = s.rcs_h_min_percent[j], &hi = s.rcs_h_max_percent[j];
        if (lo && hi) l.push_back(fmt::format("Rcs,h{} {:g} to {:g} %", j + 1, *lo, *hi));
        else if (lo) l.push_back(fmt::format("Rcs,h{} ≥ {:g} %", j + 1, *lo));
        else if (hi) l.push_back(fmt::format("Rcs,h{} ≤ {:g} %", j + 1, *hi));
    }
    if (!s.tm30_level.empty()) l.push_back(fmt::format("(TM-30-20 Annex E level {}, from memory: check the standard)", s.tm30_level));
    return l.empty() ? "none besides the chromaticity region" : join(l, ", ");
}

std::string limit_text(const std::optional<double>& v, int decimals) { return v ? format_fixed(*v, decimals) : ""; }

nlohmann::ordered_json opt_json(const std::optional<double>& v) {
    return v && std::isfinite(*v) ? nlohmann::ordered_json(*v) : nlohmann::ordered_json(nullptr);
}
nlohmann::ordered_json num_json(double v) { return std::isfinite(v) ? nlohmann::ordered_json(v) : nlohmann::ordered_json(nullptr); }

std::string format_percent(double fraction) { return std::isfinite(fraction) ? fmt::format("{:.1f} %", 100 * fraction) : "n/a"; }

std::string interval_text(const CapabilityEstimate& e) {
    if (!std::isfinite(e.ppk_ci_low)) return "n/a";
    return fmt::format("{:.2f} .. {:.2f}", e.ppk_ci_low, e.ppk_ci_high);
}

const Capability* capability_of(const LotStatistics& st, const std::string& q) {
    for (const auto& c : st.capabilities)
        if (c.quantity == q) return &c;
    return nullptr;
}

// A tick step of 1, 2 or 5 times a power of ten, about range / n.
double nice_bin(double range, double n, double smallest) {
    const double raw = std::max(range / n, smallest);
    const double mag = std::pow(10, std::floor(std::log10(raw)));
    for (double m : {1.0, 2.0, 5.0, 10.0})
        if (raw <= m * mag * (1 + 1e-9)) return m * mag;
    return 10 * mag;
}

// ---- HTML pieces --------------------------------------------------------------------------

std::string lamp_tooltip(const LampResult& l) {
    const auto& a = l.assessment;
    return fmt::format("{}: x {:.4f}, y {:.4f}, CCT {} K, Duv {}, Ra {}, R9 {}, {:.2f} steps, {}{}", l.name, a.xy.x, a.xy.y, format_fixed(cct_of(l), 0, "-"),
                       format_fixed(a.cct.duv, 4, "-"), format_fixed(ra_of(l), 1, "-"), format_fixed(r9_of(l), 1, "-"), l.steps, l.pass() ? "PASS" : "FAIL",
                       l.pass() ? "" : " (" + join(l.failures, "; ") + ")");
}

// The density view of a large lot: every lamp counted in square cells of kCellPx pixels over
// the window (lamps beyond it in the edge cells), a cell's colour by its count on a log scale
// (each class twice to four times the one below), its tooltip the count with passed and failed.
// Returns the legend of the classes (SVG in pixels, below the main legend).
// The cells go under the tolerance region (first in ov.polygons), which stays visible over them.
std::string add_density_cells(const QcRun& run, SvgOverlay& ov, double u_min, double u_max, double v_min, double v_max, double per_px, double inset,
                              int lx, int ly) {
    constexpr double kCellPx = 8;
    const double cell = kCellPx * per_px;
    const int nu = std::max(1, static_cast<int>(std::ceil((u_max - u_min) / cell))), nv = std::max(1, static_cast<int>(std::ceil((v_max - v_min) / cell)));
    std::vector<std::size_t> count(static_cast<std::size_t>(nu) * nv, 0), failed(count.size(), 0);
    for (const auto& l : run.lamps) {
        const double u = std::clamp(l.assessment.uv_prime.u, u_min + inset, u_max - inset), v = std::clamp(l.assessment.uv_prime.v, v_min + inset, v_max - inset);
        if (!std::isfinite(u) || !std::isfinite(v)) continue;
        const int i = std::clamp(static_cast<int>((u - u_min) / cell), 0, nu - 1), j = std::clamp(static_cast<int>((v - v_min) / cell), 0, nv - 1);
        const std::size_t k = static_cast<std::size_t>(j) * nu + i;
        ++count[k];
        if (!l.pass()) ++failed[k];
    }
    // Class upper bounds 1, 4, 16, 64, 256, 1024, more; light to dark blue-grey (away from the
    // pass and fail colours).
    static constexpr std::array<const char*, 7> kRamp{"#dbe4ee", "#b7c9dc", "#8fa9c6", "#6a8bb0", "#47699a", "#2b4d7e", "#15305a"};
    static constexpr std::array<std::size_t, 6> kUpper{1, 4, 16, 64, 256, 1024};
    const auto class_of = [](std::size_t n) {
        std::size_t c = 0;
        while (c < kUpper.size() && n > kUpper[c]) ++c;
        return c;
    };
    std::size_t top = 0;
    std::vector<SvgPolygon> cells;
    for (int j = 0; j < nv; ++j)
        for (int i = 0; i < nu; ++i) {
            const std::size_t k = static_cast<std::size_t>(j) * nu + i;
            if (count[k] == 0) continue;
            SvgPolygon c;
            const double u0 = u_min + i * cell, v0 = v_min + j * cell;
            c.x = {u0, u0 + cell, u0 + cell, u0};
            c.y = {v0, v0, v0 + cell, v0 + cell};
            c.css_class = "density";
            const std::size_t cls = class_of(count[k]);
            top = std::max(top, cls);
            c.fill = kRamp[cls];
            c.stroke = "none";
            c.stroke_width = 0;
            c.title = fmt::format("{} lamp{} ({} passed, {} failed)", count[k], count[k] == 1 ? "" : "s", count[k] - failed[k], failed[k]);
            cells.push_back(std::move(c));
        }
    ov.polygons.insert(ov.polygons.begin(), cells.begin(), cells.end());
    std::string o = fmt::format(R"(<g class="legend density-legend" font-size="11"><rect x="{}" y="{}" width="196" height="{}" fill="white" fill-opacity="0.9" stroke="#999"/>)",
                                lx, ly, 22 + 14 * (top + 1));
    o += fmt::format(R"(<text x="{}" y="{}">lamps per cell ({:g}×{:g} px)</text>)", lx + 6, ly + 14, kCellPx, kCellPx);
    for (std::size_t c = 0; c <= top; ++c) {
        const std::size_t lo = c == 0 ? 1 : kUpper[c - 1] + 1;
        const std::string range = c == kUpper.size() ? fmt::format("more than {}", kUpper.back()) : lo == kUpper[c] ? fmt::format("{}", lo) : fmt::format("{}-{}", lo, kUpper[c]);
        const int y = ly + 20 + 14 * static_cast<int>(c);
        o += fmt::format(R"(<rect x="{}" y="{}" width="12" height="10" fill="{}"/><text x="{}" y="{}">{}</text>)", lx + 6, y, kRamp[c], lx + 24, y + 9, range);
    }
    return o + "</g>";
}

std::string uv_diagram_svg(const QcRun& run) {
    // The legend has its own column right of the plot area (it never hides a lamp).
    constexpr int kLegend = 206, kWidth = 600 + kLegend, kHeight = 600;
    const QcSpec& spec = run.spec;
    const auto region = tolerance_region_uv(spec);
    const UV centre = uv_1976_from_xy(spec.region == QcSpec::Region::ellipse ? spec.step_ellipse.centre : spec.centre);
    // The window: the tolerance region with a margin, widened for the lamps and the centroid up
    // to three times that; lamps beyond are pinned to the edge. Equal scales in u' and v'.
    double r0 = 0.002;
    for (const auto& p : region) r0 = std::max({r0, std::abs(p.u - centre.u), std::abs(p.v - centre.v)});
    r0 *= 1.3;
    double far = 0;
    for (const auto& l : run.lamps) far = std::max({far, std::abs(l.assessment.uv_prime.u - centre.u), std::abs(l.assessment.uv_prime.v - centre.v)});
    const UV cen = uv_1976_from_xy(run.stats.centroid);
    if (std::isfinite(cen.u)) far = std::max({far, std::abs(cen.u - centre.u), std::abs(cen.v - centre.v)});
    const double r = std::max(r0, std::min(far * 1.12, 3 * r0));
    const SvgPlotArea area = svg_plot_area(kWidth, kHeight, kLegend);
    const SvgWindow w = svg_square_window(centre.u, centre.v, r, kWidth, kHeight, kLegend);
    const double per_px = w.per_pixel, u_min = w.x_min, u_max = w.x_max, v_min = w.y_min, v_max = w.y_max;

    SvgOverlay ov;
    ov.id = "uv-diagram";
    ov.css_class = "chart";
    ov.legend_width = kLegend;
    SvgPolygon reg;
    for (const auto& p : region) reg.x.push_back(p.u), reg.y.push_back(p.v);
    if (!reg.x.empty()) reg.x.pop_back(), reg.y.pop_back();  // <polygon> closes itself
    reg.id = "tolerance-region";
    reg.css_class = "tolerance-region";
    reg.fill = "#4a90d9";
    reg.fill_opacity = 0.13;
    reg.stroke = "#1f5fa8";
    reg.stroke_width = 1.5;
    reg.title = "tolerance region: " + region_text(spec);
    ov.polygons.push_back(reg);

    SvgMarker target;
    target.x = centre.u, target.y = centre.v;
    target.shape = SvgMarker::Shape::plus;
    target.size = 7;
    target.id = "target-centre";
    target.css_class = "target";
    target.colour = "#1f5fa8";
    target.title = "target centre: " + spec.target_description;

    // Failed lamps last, so they are drawn over the passing ones. In a large lot every lamp is
    // counted in the density cells and only failing and outlying lamps are drawn one by one.
    const bool density = run.lamps.size() > kQcReportDensityAbove;
    std::vector<const LampResult*> order;
    for (const auto& l : run.lamps)
        if (!density || !l.pass() || l.outlier) order.push_back(&l);
    std::stable_partition(order.begin(), order.end(), [](const LampResult* l) { return l->pass(); });
    if (order.size() > kQcReportDensityAbove) order.erase(order.begin(), order.end() - static_cast<std::ptrdiff_t>(kQcReportDensityAbove));
    const double inset = 6 * per_px;
    std::string density_legend;
    if (density) density_legend = add_density_cells(run, ov, u_min, u_max, v_min, v_max, per_px, inset, area.right + 10, area.top + 100);
    for (const LampResult* l : order) {
        SvgMarker m;
        const double u = l->assessment.uv_prime.u, v = l->assessment.uv_prime.v;
        m.x = std::clamp(u, u_min + inset, u_max - inset);
        m.y = std::clamp(v, v_min + inset, v_max - inset);
        const bool pinned = m.x != u || m.y != v;
        m.shape = pinned ? SvgMarker::Shape::ring : SvgMarker::Shape::circle;
        m.size = 4;
        m.colour = l->pass() ? kPassColour : kFailColour;
        m.css_class = std::string("lamp ") + (l->pass() ? "pass" : "fail") + (pinned ? " off-chart" : "") + (l->outlier ? " outlier" : "");
        m.title = lamp_tooltip(*l) + (pinned ? " [beyond the window, shown at its edge]" : "");
        ov.markers.push_back(m);
    }
    if (std::isfinite(cen.u)) {
        SvgMarker c;
        c.x = std::clamp(cen.u, u_min + inset, u_max - inset);
        c.y = std::clamp(cen.v, v_min + inset, v_max - inset);
        c.shape = SvgMarker::Shape::diamond;
        c.size = 8;
        c.id = "centroid";
        c.css_class = "centroid";
        c.colour = "#000";
        c.title = fmt::format("lot centroid: x {:.4f}, y {:.4f}, {:.2f} steps from the target centre", run.stats.centroid.x, run.stats.centroid.y,
                              run.stats.centroid_steps);
        ov.markers.push_back(c);
    }
    // The target cross last, over the lamps and the centroid: it must stay visible under a cluster.
    ov.markers.push_back(target);
    // Legend, right of the plot area.
    std::size_t passed = 0, failed = 0;
    for (const auto& l : run.lamps) (l.pass() ? passed : failed)++;
    const int lx = area.right + 10, ly = area.top;
    ov.pixel_svg = fmt::format(R"(<g class="legend" font-size="11"><rect x="{}" y="{}" width="196" height="88" fill="white" fill-opacity="0.9" stroke="#999"/>)", lx, ly);
    ov.pixel_svg += fmt::format(R"(<circle cx="{}" cy="{}" r="4" fill="{}" stroke="#222" stroke-width="0.6"/><text x="{}" y="{}">pass ({})</text>)", lx + 12, ly + 14,
                                kPassColour, lx + 24, ly + 18, passed);
    ov.pixel_svg += fmt::format(R"(<circle cx="{}" cy="{}" r="4" fill="{}" stroke="#222" stroke-width="0.6"/><text x="{}" y="{}">fail ({})</text>)", lx + 12, ly + 30,
                                kFailColour, lx + 24, ly + 34, failed);
    ov.pixel_svg += fmt::format(R"(<polygon points="{},{} {},{} {},{} {},{}" fill="#000"/><text x="{}" y="{}">lot centroid</text>)", lx + 12, ly + 40, lx + 18,
                                ly + 46, lx + 12, ly + 52, lx + 6, ly + 46, lx + 24, ly + 50);
    ov.pixel_svg += fmt::format(R"(<path d="M{} {}H{}M{} {}V{}" stroke="#1f5fa8" stroke-width="1.5"/><text x="{}" y="{}">target centre</text>)", lx + 6, ly + 62,
                                lx + 18, lx + 12, ly + 56, ly + 68, lx + 24, ly + 66);
    ov.pixel_svg += fmt::format(R"(<rect x="{}" y="{}" width="12" height="9" fill="#4a90d9" fill-opacity="0.25" stroke="#1f5fa8"/><text x="{}" y="{}">{}</text></g>)",
                                lx + 6, ly + 74, lx + 24, ly + 82,
                                xml_escape(spec.region == QcSpec::Region::ellipse ? fmt::format("{:g}-step ellipse", spec.max_steps)
                                           : spec.region == QcSpec::Region::circle ? "u'v' circle" : "ANSI quadrangle"));
    ov.pixel_svg += density_legend;
    return svg_uv_diagram("CIE 1976 u'v' chromaticity (2° observer), zoomed on the target", {}, u_min, u_max, v_min, v_max, kWidth, kHeight, ov);
}

std::string histogram_svg(const std::string& id, const std::string& quantity, const std::vector<double>& values_in, std::optional<double> minimum,
                          std::optional<double> maximum = std::nullopt) {
    constexpr int kWidth = 440, kHeight = 300;
    std::vector<double> values;
    for (double v : values_in)
        if (std::isfinite(v)) values.push_back(v);
    SvgOverlay ov;
    ov.id = id;
    ov.css_class = "chart histogram";
    if (values.empty()) {
        ov.pixel_svg = fmt::format(R"(<text x="{}" y="{}" text-anchor="middle">no {} values</text>)", kWidth / 2, kHeight / 2, xml_escape(quantity));
        return svg_chart({fmt::format("{} of the lot", quantity), quantity, "lamps", 0, 1, 0, 1, kWidth, kHeight}, {}, ov);
    }
    double lo = *std::min_element(values.begin(), values.end()), hi = *std::max_element(values.begin(), values.end());
    if (minimum) lo = std::min(lo, *minimum), hi = std::max(hi, *minimum);
    if (maximum) lo = std::min(lo, *maximum), hi = std::max(hi, *maximum);
    const double w = nice_bin(hi - lo, 10, 0.1);
    // Bin edges fall on the minimum (else the maximum).
    const double anchor = minimum ? *minimum : maximum ? *maximum : std::floor(lo / w) * w;
    const long k0 = static_cast<long>(std::floor((lo - anchor) / w + 1e-9)), k1 = static_cast<long>(std::floor((hi - anchor) / w + 1e-9));
    std::vector<int> counts(static_cast<std::size_t>(k1 - k0 + 1), 0);
    for (double v : values) {
        const long k = std::clamp(static_cast<long>(std::floor((v - anchor) / w + 1e-9)), k0, k1);
        ++counts[static_cast<std::size_t>(k - k0)];
    }
    const int most = *std::max_element(counts.begin(), counts.end());
    const double x_min = anchor + static_cast<double>(k0) * w - w, x_max = anchor + static_cast<double>(k1 + 1) * w + w;
    const double y_max = std::max(2.0, std::ceil(most * 1.2));
    for (std::size_t i = 0; i < counts.size(); ++i) {
        if (!counts[i]) continue;
        const double a = anchor + static_cast<double>(k0 + static_cast<long>(i)) * w, b = a + w;
        SvgPolygon bar;
        bar.x = {a, b, b, a};
        bar.y = {0, 0, static_cast<double>(counts[i]), static_cast<double>(counts[i])};
        const bool below = minimum && b <= *minimum + 1e-9, above = maximum && a >= *maximum - 1e-9;
        bar.css_class = below ? "bar below-limit" : above ? "bar above-limit" : "bar";
        bar.fill = below || above ? "#e07b7b" : "#6a9fd4";
        bar.stroke = "#fff";
        bar.title = fmt::format("{} {:g} to {:g}: {} lamp{}", quantity, a, b, counts[i], counts[i] == 1 ? "" : "s");
        ov.polygons.push_back(bar);
    }
    double mean = 0;
    for (double v : values) mean += v;
    mean /= static_cast<double>(values.size());
    SvgPolygon m;
    m.closed = false;
    m.x = {mean, mean};
    m.y = {0, y_max};
    m.css_class = "mean";
    m.stroke = "#555";
    m.dash = "2 3";
    m.title = fmt::format("mean {} {:.2f}", quantity, mean);
    ov.polygons.push_back(m);
    ov.texts.push_back({mean, y_max, "mean " + format_fixed(mean, 1), "start", "#555", 3, 12});
    // A spec limit: a dashed vertical line and its label on the side away from the accepted values.
    auto limit_marker = [&](double at, const char* word, const char* short_word, const char* text_anchor, double dx) {
        SvgPolygon lim;
        lim.closed = false;
        lim.x = {at, at};
        lim.y = {0, y_max};
        lim.css_class = "spec-limit";
        lim.stroke = kFailColour;
        lim.stroke_width = 2;
        lim.dash = "6 3";
        lim.title = fmt::format("spec {} {} {:g}", word, quantity, at);
        ov.polygons.push_back(lim);
        ov.texts.push_back({at, y_max, fmt::format("{} {:g}", short_word, at), text_anchor, kFailColour, dx, 12});
    };
    if (minimum) limit_marker(*minimum, "minimum", "min", "end", -3);
    if (maximum) limit_marker(*maximum, "maximum", "max", "start", 3);
    return svg_chart({fmt::format("{} of the lot ({} lamps, bins of {:g})", quantity, values.size(), w), quantity, "lamps", x_min, x_max, 0, y_max, kWidth, kHeight},
                     {}, ov);
}

constexpr const char* kStyle = R"css(
body { font-family: sans-serif; margin: 24px; color: #222; max-width: 1240px; }
h1 { font-size: 22px; margin-bottom: 4px; }
h2 { font-size: 17px; margin-top: 28px; border-bottom: 1px solid #ccc; padding-bottom: 3px; }
table { border-collapse: collapse; font-size: 12px; }
th, td { border: 1px solid #ccc; padding: 2px 6px; text-align: right; white-space: nowrap; }
th { background: #f0f0f0; }
td.text, th.text { text-align: left; }
td.notes { text-align: left; white-space: normal; min-width: 220px; }
tr.fail td.result { color: #b00; font-weight: bold; }
tr.pass td.result { color: #176b17; font-weight: bold; }
tr.outlier td.name { text-decoration: underline dotted; }
.summary td { text-align: left; }
.verdict { font-size: 18px; font-weight: bold; }
.verdict.all-pass { color: #176b17; }
.verdict.some-fail { color: #b00; }
.charts { display: flex; flex-wrap: wrap; gap: 16px; align-items: flex-start; }
.histograms { display: flex; flex-direction: column; gap: 8px; }
.cautions { margin-top: 28px; padding: 8px 12px; background: #fff8e0; border: 1px solid #e0c060; font-size: 12px; }
.note { font-size: 12px; color: #555; }
p { font-size: 14px; }
)css";

}  // namespace

std::vector<UV> tolerance_region_uv(const QcSpec& spec, int points) {
    points = std::max(points, 8);
    std::vector<UV> out;
    switch (spec.region) {
        case QcSpec::Region::ellipse: {
            // The n-step contour g11 dx^2 + 2 g12 dx dy + g22 dy^2 = n^2 (MacAdam 1942): with the
            // Cholesky factor G = L L^T, d = n L^-T (cos t, sin t) gives d^T G d = n^2.
            const MacAdamEllipse& e = spec.step_ellipse;
            const double n = spec.max_steps;
            const double l11 = std::sqrt(e.g11), l21 = e.g12 / l11, l22 = std::sqrt(e.g22 - l21 * l21);
            for (int i = 0; i < points; ++i) {
                const double t = 2 * std::numbers::pi * i / points;
                const double dy = n * std::sin(t) / l22, dx = (n * std::cos(t) - l21 * dy) / l11;
                out.push_back(uv_1976_from_xy({e.centre.x + dx, e.centre.y + dy}));
            }
            break;
        }
        case QcSpec::Region::ansi_quadrangle: {
            // Sides of constant Duv follow the locus; sides of constant CCT are isotemperature lines.
            const AnsiC78377Class c = spec.ansi_class ? *spec.ansi_class : AnsiC78377Class{};
            const double lo = c.cct_K - c.cct_tolerance_K, hi = c.cct_K + c.cct_tolerance_K;
            const double d0 = c.duv_centre - kAnsiC78377DuvTolerance, d1 = c.duv_centre + kAnsiC78377DuvTolerance;
            const int per = std::max(2, points / 4);
            const std::array<std::array<double, 4>, 4> sides{{{lo, hi, d0, d0}, {hi, hi, d0, d1}, {hi, lo, d1, d1}, {lo, lo, d1, d0}}};
            for (const auto& s : sides)
                for (int i = 0; i < per; ++i) {
                    const double f = static_cast<double>(i) / per;
                    // CCT interpolated in reciprocal megakelvin, where the locus is nearly uniform.
                    const double mired = 1e6 / s[0] + f * (1e6 / s[1] - 1e6 / s[0]);
                    out.push_back(uv_1976_from_xy(xy_from_cct_duv(1e6 / mired, s[2] + f * (s[3] - s[2]))));
                }
            break;
        }
        case QcSpec::Region::circle: {
            const UV c = uv_1976_from_xy(spec.centre);
            for (int i = 0; i < points; ++i) {
                const double t = 2 * std::numbers::pi * i / points;
                out.push_back({c.u + spec.max_duv_prime * std::cos(t), c.v + spec.max_duv_prime * std::sin(t)});
            }
            break;
        }
    }
    if (!out.empty()) out.push_back(out.front());
    return out;
}

// The photometry columns (the assessment's last kPhotometryColumns) go after the qc columns, so
// the qc columns keep their places.
std::vector<std::string> qc_lamp_columns() {
    auto c = assessment_columns();
    const std::vector<std::string> photometry(c.end() - kPhotometryColumns, c.end());
    c.resize(c.size() - static_cast<std::size_t>(kPhotometryColumns));
    for (const char* k : {"file", "steps", "inside_region", "pass", "failures", "outlier", "outlier_note"}) c.push_back(k);
    c.insert(c.end(), photometry.begin(), photometry.end());
    for (const auto& k : fidelity_summary_columns()) c.push_back(k);  // Rf, Rg (issue 13): appended
    return c;
}

std::vector<std::string> qc_lamp_values(const LampResult& l) {
    auto v = assessment_values(l.assessment);
    const std::vector<std::string> photometry(v.end() - kPhotometryColumns, v.end());
    v.resize(v.size() - static_cast<std::size_t>(kPhotometryColumns));
    v.push_back(l.file);
    v.push_back(format_fixed(l.steps, 3));
    v.push_back(l.inside_region ? "true" : "false");
    v.push_back(l.pass() ? "true" : "false");
    v.push_back(join(l.failures, "; "));
    v.push_back(l.outlier ? "true" : "false");
    v.push_back(l.outlier_note);
    v.insert(v.end(), photometry.begin(), photometry.end());
    for (auto& x : fidelity_summary_values(l.assessment)) v.push_back(std::move(x));
    return v;
}

std::string qc_text(const QcRun& run) {
    const QcSpec& s = run.spec;
    const LotStatistics& st = run.stats;
    std::string o = fmt::format("QC of a lamp lot against \"{}\"{}\n", s.name, s.path.empty() ? "" : " (" + s.path + ")");
    o += fmt::format("  target       {}\n", s.target_description);
    o += fmt::format("  region       {}\n", region_text(s));
    o += fmt::format("  limits       {}\n", limits_text(s));
    o += fmt::format("  lamps {}   passed {}   failed {}   pass rate {}   outliers {}   bad files {}\n", st.count, st.passed, st.count - st.passed,
                     st.count ? fmt::format("{:.1f} %", 100 * st.pass_rate) : "n/a", st.outliers, run.bad_files.size());

    if (!run.lamps.empty()) {
        std::size_t w = 4;
        for (const auto& l : run.lamps) w = std::max(w, l.name.size());
        w = std::min<std::size_t>(w, 40);
        // Flux columns only when some lamp was measured in absolute units; a relative lamp there
        // shows "relative".
        const bool photometry = std::any_of(run.lamps.begin(), run.lamps.end(), [](const LampResult& l) { return l.assessment.absolute; });
        const std::string flux_head = photometry ? fmt::format(" {:>9} {:>6}", "flux lm", "lm/W") : "";
        o += fmt::format("\n  {:<{}}  {:>7} {:>7} {:>6} {:>8} {:>6} {:>6} {:>6} {:>6} {:>6}{}  result\n", "lamp", w, "x", "y", "CCT K", "Duv", "Ra", "R9", "Rf", "Rg",
                         "steps", flux_head);
        for (const auto& l : run.lamps) {
            const auto& a = l.assessment;
            std::string flux;
            if (photometry)
                flux = a.luminous_flux_lm ? fmt::format(" {:>9.1f} {:>6}", *a.luminous_flux_lm, a.efficacy_lm_per_W ? fmt::format("{:.1f}", *a.efficacy_lm_per_W) : "-")
                                          : fmt::format(" {:>9} {:>6}", "relative", "-");
            o += fmt::format("  {:<{}}  {:>7.4f} {:>7.4f} {:>6} {:>8} {:>6} {:>6} {:>6} {:>6} {:>6.2f}{}  {}", l.name, w, a.xy.x, a.xy.y, format_fixed(cct_of(l), 0, "-"),
                             a.cct.valid ? format_signed(a.cct.duv, 4) : "-", format_fixed(ra_of(l), 1, "-"), format_fixed(r9_of(l), 1, "-"),
                             format_fixed(rf_of(l), 1, "-"), format_fixed(rg_of(l), 1, "-"), l.steps,
                             flux, l.pass() ? "PASS" : "FAIL");
            if (!l.pass()) o += "  " + join(l.failures, "; ");
            if (l.outlier) o += fmt::format("  [outlier: {}]", l.outlier_note);
            o += "\n";
        }
    }
    if (st.outliers) {
        o += "\n  outliers (robust z = (v - median) / max(1.4826 MAD, resolution floor) beyond 3.5, Iglewicz and Hoaglin 1993)\n";
        for (const auto& l : run.lamps)
            if (l.outlier) o += fmt::format("    {}  {}  ({})\n", l.name, l.outlier_note, l.file);
    }

    if (st.count) {
        o += "\n  lot statistics\n";
        o += fmt::format("    {:<14} {:>11} {:>11} {:>11} {:>11}\n", "quantity", "mean", "sd", "min", "max");
        for (const auto& q : st.summaries) {
            if (is_photometric(q.quantity) && !std::isfinite(q.mean)) continue;  // relative spectra: no flux to summarise
            const auto f = quantity_format(q.quantity);
            o += fmt::format("    {:<14} {:>11} {:>11} {:>11} {:>11}\n", f.label, format_fixed(q.mean, f.decimals, "-"), format_fixed(q.sd, f.decimals + 1, "-"),
                             format_fixed(q.min, f.decimals, "-"), format_fixed(q.max, f.decimals, "-"));
        }
        const UV cu = uv_1976_from_xy(st.centroid);
        o += fmt::format("  centroid     x {:.4f}  y {:.4f}   u' {:.4f}  v' {:.4f}   {:.2f} MacAdam steps from the target centre\n", st.centroid.x,
                         st.centroid.y, cu.u, cu.v, st.centroid_steps);
        o += fmt::format("  outside the chromaticity region: {}\n", format_percent(st.fraction_outside_region));
        if (!st.capabilities.empty()) {
            o += "\n  process performance Ppk = min(USL - mean, mean - LSL) / (3 sd), overall sd; 95 % interval (Bissell 1990)\n";
            o += fmt::format("    {:<14} {:>9} {:>9} {:>4} {:>11} {:>11} {:>7} {:>15}   {}\n", "quantity", "lower", "upper", "n", "mean", "sd", "Ppk",
                             "95 % interval", st.outliers ? "without outliers: n, Ppk, 95 % interval" : "");
            for (const auto& c : st.capabilities) {
                const auto f = quantity_format(c.quantity);
                const auto& a = c.all;
                const auto& w = c.without_outliers;
                o += fmt::format("    {:<14} {:>9} {:>9} {:>4} {:>11} {:>11} {:>7} {:>15}", f.label, c.lower ? fmt::format("{:g}", *c.lower) : "-",
                                 c.upper ? fmt::format("{:g}", *c.upper) : "-", a.n, format_fixed(a.mean, f.decimals, "-"),
                                 format_fixed(a.sd, f.decimals + 1, "-"), format_fixed(a.ppk, 2, "n/a"), interval_text(a));
                if (st.outliers) o += fmt::format("   {}, {}, {}", w.n, format_fixed(w.ppk, 2, "n/a"), interval_text(w));
                o += "\n";
            }
        }
        if (!st.outliers_checked)
            o += fmt::format("  outliers not looked for: fewer than {} lamps\n", kMinLotForOutliers);
    }
    if (!run.bad_files.empty()) {
        o += fmt::format("\n  bad files ({}): not judged\n", run.bad_files.size());
        for (const auto& b : run.bad_files) o += fmt::format("    {}: {}\n", b.file, b.reason);
    }
    return o;
}

nlohmann::ordered_json qc_json(const QcRun& run) {
    using J = nlohmann::ordered_json;
    const QcSpec& s = run.spec;
    const LotStatistics& st = run.stats;
    J spec;
    spec["name"] = s.name;
    spec["path"] = s.path;
    spec["target"] = s.target_description;
    spec["region"] = region_name(s.region);
    spec["centre"] = {{"x", s.centre.x}, {"y", s.centre.y}};
    spec["step_ellipse"] = {{"x", s.step_ellipse.centre.x}, {"y", s.step_ellipse.centre.y}, {"g11", s.step_ellipse.g11},
                            {"g12", s.step_ellipse.g12}, {"g22", s.step_ellipse.g22}};
    if (s.region == QcSpec::Region::ellipse) spec["max_steps"] = s.max_steps;
    if (s.region == QcSpec::Region::circle) spec["max_duv_prime"] = s.max_duv_prime;
    if (s.ansi_class) spec["ansi_class_K"] = s.ansi_class->nominal_K;
    spec["limits"] = {{"ra_min", opt_json(s.ra_min)},       {"r9_min", opt_json(s.r9_min)}, {"cct_min_K", opt_json(s.cct_min_K)},
                      {"cct_max_K", opt_json(s.cct_max_K)}, {"duv_min", opt_json(s.duv_min)}, {"duv_max", opt_json(s.duv_max)},
                      {"flux_min_lm", opt_json(s.flux_min_lm)}, {"flux_max_lm", opt_json(s.flux_max_lm)},
                      {"efficacy_min_lm_per_W", opt_json(s.efficacy_min_lm_per_W)}, {"min_rf", opt_json(s.rf_min)},
                      {"min_rg", opt_json(s.rg_min)}, {"max_rg", opt_json(s.rg_max)}};
    J bins = J::array();
    for (std::size_t j = 0; j < s.rf_h_min.size(); ++j)
        bins.push_back({{"bin", j + 1}, {"min_rf", opt_json(s.rf_h_min[j])}, {"min_rcs", opt_json(s.rcs_h_min_percent[j])},
                        {"max_rcs", opt_json(s.rcs_h_max_percent[j])}});
    spec["limits"]["hue_bins"] = std::move(bins);
    spec["limits"]["tm30_level"] = s.tm30_level.empty() ? J(nullptr) : J(s.tm30_level);
    J j;
    j["spec"] = spec;
    j["count"] = st.count;
    j["passed"] = st.passed;
    j["failed"] = st.count - st.passed;
    j["pass_rate"] = num_json(st.pass_rate);
    j["outliers"] = st.outliers;
    j["bad_file_count"] = run.bad_files.size();
    J lamps = J::array();
    for (const auto& l : run.lamps) {
        J a = assessment_json(l.assessment);
        a["file"] = l.file;
        a["content_hash"] = l.content_hash;
        a["steps"] = num_json(l.steps);
        a["inside_region"] = l.inside_region;
        a["pass"] = l.pass();
        a["failures"] = l.failures;
        a["outlier"] = l.outlier;
        a["outlier_note"] = l.outlier_note;
        // assessment_json has no TM-30 figures (assess adds them itself): Rf and Rg last (issue 13).
        add_fidelity_summary_json(a, l.assessment);
        lamps.push_back(std::move(a));
    }
    j["lamps"] = std::move(lamps);
    J stats;
    J summaries = J::array();
    for (const auto& q : st.summaries)
        summaries.push_back({{"quantity", q.quantity}, {"mean", num_json(q.mean)}, {"sd", num_json(q.sd)}, {"min", num_json(q.min)}, {"max", num_json(q.max)}});
    stats["summaries"] = std::move(summaries);
    const UV cu = uv_1976_from_xy(st.centroid);
    stats["centroid"] = {{"x", num_json(st.centroid.x)}, {"y", num_json(st.centroid.y)}, {"u_prime", num_json(cu.u)}, {"v_prime", num_json(cu.v)},
                         {"steps", num_json(st.centroid_steps)}};
    auto estimate_json = [](const CapabilityEstimate& e) {
        return J{{"n", e.n}, {"mean", num_json(e.mean)}, {"sd", num_json(e.sd)}, {"ppk", num_json(e.ppk)},
                 {"ppk_ci95", {num_json(e.ppk_ci_low), num_json(e.ppk_ci_high)}}};
    };
    J caps = J::array();
    for (const auto& c : st.capabilities) {
        J e = estimate_json(c.all);
        J cj{{"quantity", c.quantity}, {"lower", opt_json(c.lower)}, {"upper", opt_json(c.upper)}};
        for (auto it = e.begin(); it != e.end(); ++it) cj[it.key()] = it.value();
        cj["without_outliers"] = estimate_json(c.without_outliers);
        caps.push_back(std::move(cj));
    }
    stats["fraction_outside_region"] = num_json(st.fraction_outside_region);
    stats["outliers_checked"] = st.outliers_checked;
    stats["capability"] = std::move(caps);
    j["statistics"] = std::move(stats);
    J bad = J::array();
    for (const auto& b : run.bad_files) bad.push_back({{"file", b.file}, {"reason", b.reason}});
    j["bad_files"] = std::move(bad);
    // Every lamp's warnings, named by lamp, at the top (each lamp also has its own).
    J warnings = J::array();
    for (const auto& l : run.lamps)
        for (const auto& w : l.assessment.warnings) warnings.push_back(fmt::format("{}: {}", l.name, w));
    j["warnings"] = std::move(warnings);
    return j;
}

std::string qc_html_report(const QcRun& run, const std::string& extra_html) {
    const QcSpec& s = run.spec;
    const LotStatistics& st = run.stats;
    auto e = [](const std::string& t) { return xml_escape(t); };
    std::string o;
    o += "<!DOCTYPE html>\n<html xmlns=\"http://www.w3.org/1999/xhtml\" lang=\"en\">\n<head>\n<meta charset=\"utf-8\"/>\n";
    o += "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\"/>\n";
    o += fmt::format("<title>QC report: {}</title>\n<style>{}</style>\n</head>\n<body>\n", e(s.name), kStyle);
    o += fmt::format("<h1>QC report: {}</h1>\n", e(s.name));
    const bool all_pass = st.count > 0 && st.passed == st.count;
    o += fmt::format("<p class=\"verdict {}\">{} of {} lamps passed ({}){}</p>\n", all_pass ? "all-pass" : "some-fail", st.passed, st.count,
                     st.count ? fmt::format("{:.1f} %", 100 * st.pass_rate) : "no lamps",
                     run.bad_files.empty() ? "" : fmt::format("; {} bad file{} not judged", run.bad_files.size(), run.bad_files.size() == 1 ? "" : "s"));

    o += "<table class=\"summary\" id=\"summary\">\n";
    auto row = [&](const std::string& k, const std::string& v) { o += fmt::format("<tr><th class=\"text\">{}</th><td>{}</td></tr>\n", e(k), e(v)); };
    row("specification", s.name + (s.path.empty() ? "" : " (" + s.path + ")"));
    row("target", s.target_description);
    row("tolerance region", region_text(s));
    row("limits", limits_text(s));
    row("lamps", fmt::format("{} judged, {} passed, {} failed, {} outliers", st.count, st.passed, st.count - st.passed, st.outliers));
    row("lot centroid", std::isfinite(st.centroid.x) ? fmt::format("x {:.4f}, y {:.4f}: {:.2f} MacAdam steps from the target centre", st.centroid.x,
                                                                   st.centroid.y, st.centroid_steps)
                                                     : "none (no lamps)");
    row("bad files", fmt::format("{}", run.bad_files.size()));
    o += "</table>\n";

    o += "<h2>Chromaticity and colour rendering</h2>\n<div class=\"charts\">\n";
    o += "<div class=\"diagram\">" + uv_diagram_svg(run) + "</div>\n";
    std::vector<double> ra, r9;
    for (const auto& l : run.lamps) ra.push_back(ra_of(l)), r9.push_back(r9_of(l));
    o += "<div class=\"histograms\">" + histogram_svg("hist-ra", "Ra", ra, s.ra_min) + histogram_svg("hist-r9", "R9", r9, s.r9_min) + "</div>\n";
    o += "</div>\n";
    if (run.lamps.size() > kQcReportDensityAbove)
        o += fmt::format("<p class=\"note\">Density: more than {} lamps, so the lamps are counted in square cells (the legend gives the "
                         "counts; a cell's tooltip its passed and failed lamps); failing and outlying lamps are drawn as points over them.</p>\n",
                         kQcReportDensityAbove);
    o += "<p class=\"note\">Points: each lamp at its CIE 1976 u', v' (green: passed every limit; red: failed at least one; "
         "an open ring: beyond the plotted window, shown at its edge). The black diamond is the lot centroid (mean x, y); the "
         "cross is the target centre. Ticks on the Planckian locus mark CCT. Histogram bars below a spec minimum are red.</p>\n";

    o += "<h2>Colour fidelity and gamut (CIE 224, TM-30-20)</h2>\n<div class=\"charts\">\n";
    if (run.centroid && run.centroid->fidelity)
        o += "<div class=\"diagram\">" + colour_vector_graphic_svg(*run.centroid, "cvg-centroid") + "</div>\n";
    else
        o += "<p id=\"cvg-centroid\">No colour vector graphic: the lot's centroid spectrum has no CCT (or there are no lamps).</p>\n";
    std::vector<double> rf, rg;
    for (const auto& l : run.lamps) rf.push_back(rf_of(l)), rg.push_back(rg_of(l));
    o += "<div class=\"histograms\">" + histogram_svg("hist-rf", "Rf", rf, s.rf_min) + histogram_svg("hist-rg", "Rg", rg, s.rg_min, s.rg_max) + "</div>\n";
    o += "</div>\n";
    o += "<p class=\"note\">The colour vector graphic is that of the lot's centroid spectrum (the mean of the lamps' spectra, each scaled to "
         "unit sum over 380-780 nm): per hue bin the reference's average a′, b′ on the dashed circle and an arrow to the test's "
         "(TM-30-20, CAM02-UCS). Histogram bars outside a spec limit are red.</p>\n";

    o += "<h2>Lamps</h2>\n<table id=\"lamp-table\">\n<thead><tr><th>#</th><th class=\"text\">lamp</th><th class=\"text\">file</th><th>x</th><th>y</th>"
         "<th>u'</th><th>v'</th><th>CCT (K)</th><th>Duv</th><th>Ra</th><th>R9</th><th>Rf</th><th>Rg</th><th>LER (lm/W)</th><th>steps</th><th class=\"text\">result</th>"
         "<th class=\"text\">failed limits, notes</th></tr></thead>\n<tbody>\n";
    const bool only_exceptions = run.lamps.size() > kQcReportDensityAbove;
    std::size_t not_listed = 0;
    for (std::size_t i = 0; i < run.lamps.size(); ++i) {
        const auto& l = run.lamps[i];
        const auto& a = l.assessment;
        if (only_exceptions && l.pass() && !l.outlier) {
            ++not_listed;
            continue;
        }
        std::string notes = join(l.failures, "; ");
        if (l.outlier) notes += (notes.empty() ? "" : "; ") + std::string("outlier: ") + l.outlier_note;
        o += fmt::format("<tr class=\"{}{}\"><td>{}</td><td class=\"text name\">{}</td><td class=\"text\">{}</td><td>{:.4f}</td><td>{:.4f}</td><td>{:.4f}</td>"
                         "<td>{:.4f}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{:.2f}</td><td class=\"text result\">{}</td>"
                         "<td class=\"notes\">{}</td></tr>\n",
                         l.pass() ? "pass" : "fail", l.outlier ? " outlier" : "", i + 1, e(l.name), e(l.file), a.xy.x, a.xy.y, a.uv_prime.u, a.uv_prime.v,
                         format_fixed(cct_of(l), 0, "-"), a.cct.valid ? format_signed(a.cct.duv, 4) : "-", format_fixed(ra_of(l), 1, "-"), format_fixed(r9_of(l), 1, "-"),
                         format_fixed(rf_of(l), 1, "-"), format_fixed(rg_of(l), 1, "-"), format_fixed(a.ler_lm_per_W, 1, "-"), l.steps, l.pass() ? "PASS" : "FAIL", e(notes));
    }
    o += "</tbody>\n</table>\n";
    if (only_exceptions)
        o += fmt::format("<p class=\"note\" id=\"lamps-not-listed\">{} passing lamps that are not outliers are not listed (a lot of more than {} lamps); "
                         "<code>lampwright qc --format csv</code> or <code>--format json</code> lists every lamp.</p>\n",
                         not_listed, kQcReportDensityAbove);

    o += "<h2>Lot statistics</h2>\n<table id=\"lot-statistics\">\n<thead><tr><th class=\"text\">quantity</th><th>mean</th><th>sd</th><th>min</th>"
         "<th>max</th><th>lower limit</th><th>upper limit</th><th>Ppk</th><th>Ppk 95 % interval</th><th>Ppk without outliers</th></tr></thead>\n<tbody>\n";
    for (const auto& q : st.summaries) {
        const auto f = quantity_format(q.quantity);
        const Capability* c = capability_of(st, q.quantity);
        o += fmt::format("<tr data-quantity=\"{}\"><th class=\"text\">{}</th><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td></tr>\n",
                         e(q.quantity), e(f.label), format_fixed(q.mean, f.decimals, "-"), format_fixed(q.sd, f.decimals + 1, "-"), format_fixed(q.min, f.decimals, "-"),
                         format_fixed(q.max, f.decimals, "-"), c ? limit_text(c->lower, f.decimals) : "", c ? limit_text(c->upper, f.decimals) : "",
                         c ? format_fixed(c->all.ppk, 2, "n/a") : "", c ? interval_text(c->all) : "",
                         c ? fmt::format("{} (n {})", format_fixed(c->without_outliers.ppk, 2, "n/a"), c->without_outliers.n) : "");
    }
    o += "</tbody>\n</table>\n";
    const UV cu = uv_1976_from_xy(st.centroid);
    o += fmt::format("<p id=\"centroid-text\">Lot centroid: x {}, y {} (u' {}, v' {}), {} MacAdam steps from the target centre. "
                     "{} of the lamps lie outside the chromaticity region. "
                     "Ppk = min(USL − mean, mean − LSL) / (3 sd) with the overall sd, one-sided where the spec gives one limit (Montgomery, "
                     "Introduction to Statistical Quality Control); approximate 95 % interval Ppk ± 1.96 √(1/(9n) + Ppk²/(2(n − 1))) (Bissell 1990). "
                     "No index on MacAdam steps: a distance is not normally distributed.</p>\n",
                     format_fixed(st.centroid.x, 4, "-"), format_fixed(st.centroid.y, 4, "-"), format_fixed(cu.u, 4, "-"), format_fixed(cu.v, 4, "-"), format_fixed(st.centroid_steps, 2, "-"),
                     format_percent(st.fraction_outside_region));
    if (st.outliers) {
        o += "<p id=\"outliers\">Outliers (robust z = (v − median) / max(1.4826 MAD, resolution floor), |z| &gt; 3.5, Iglewicz and Hoaglin 1993): ";
        std::vector<std::string> names;
        for (const auto& l : run.lamps)
            if (l.outlier) names.push_back(e(l.name + " (" + l.outlier_note + ")"));
        o += join(names, ", ") + ".</p>\n";
    }

    o += "<h2>Bad files</h2>\n";
    if (run.bad_files.empty()) {
        o += "<p id=\"bad-files\">None: every file was read.</p>\n";
    } else {
        o += "<ul id=\"bad-files\">\n";
        for (const auto& b : run.bad_files) o += fmt::format("<li><code>{}</code>: {}</li>\n", e(b.file), e(b.reason));
        o += "</ul>\n";
    }
    o += extra_html;
    o += fmt::format("<p class=\"cautions\">{}</p>\n", e(kCautions));
    o += "<p class=\"note\">Made by lampwright. Colorimetry per CIE 15:2004, colour rendering per CIE 13.3-1995, MacAdam steps from the "
         "spec's one-step ellipse.</p>\n</body>\n</html>\n";
    return o;
}

}  // namespace lampwright

namespace lampwright {

namespace {

std::string correction_note() { return "Corrected by lampwright qc from the centroid of the lot's inlier lamps; check it on a trial batch first."; }

}  // namespace

namespace {

std::string prediction_text(const CorrectedLotPrediction& p) {
    std::string fails;
    for (const auto& [kind, n] : p.failures) fails += fmt::format("{}{} {}", fails.empty() ? "" : ", ", kind, n);
    return fmt::format("mean Ra {} R9 {}; centroid of the inliers x {:.4f} y {:.4f} ({:.2f} steps), of all lamps {:.2f} steps; {} of {} lamps "
                       "({:.1f} %) pass every limit{}",
                       format_fixed(p.mean_ra, 1, "-"), format_fixed(p.mean_r9, 1, "-"), p.inlier_centroid.x, p.inlier_centroid.y,
                       p.inlier_centroid_steps, p.centroid_steps, p.passing, p.lamps, 100 * p.pass_share, fails.empty() ? "" : " (failing: " + fails + ")");
}

constexpr const char* kPredictionMethod =
    "every measured lamp, outliers included, its spectrum plus the model's change of spectrum, blend(corrected) - blend(recipe), "
    "scaled to the lamp's 380-780 nm power, judged against every limit of the spec";

}  // namespace

std::string lot_correction_text(const InlierCorrection& ic, const BlendInput& recipe, const std::string& recipe_path) {
    const LotCorrection& c = ic.correction;
    std::string t = fmt::format("\nCorrection of {} from the centroid of the {} inlier lamps (x {:.4f} y {:.4f}, {:.2f} steps from the target)\n", recipe_path,
                                ic.inliers, c.lot_centroid.x, c.lot_centroid.y, c.offset_steps);
    if (ic.outliers)
        t += fmt::format("  the {} outlier{} left out move the centroid {:.2f} steps (all lamps: x {:.4f} y {:.4f})\n", ic.outliers, ic.outliers == 1 ? "" : "s",
                         ic.outlier_shift_steps, ic.all_centroid.x, ic.all_centroid.y);
    for (std::size_t i = 0; i < c.old_fractions.size(); ++i)
        t += fmt::format("  {:<36} {:>8.4f} -> {:>8.4f}  ({})  ± {}\n", recipe.components[i].label, c.old_fractions[i], c.new_fractions[i],
                         format_signed(c.new_fractions[i] - c.old_fractions[i], 4), i < ic.fraction_sd.size() ? format_fixed(ic.fraction_sd[i], 4, "-") : "-");
    t += fmt::format("  expected centroid x {:.4f} y {:.4f}: {:.2f} steps from the target{}\n", c.expected_centroid.x, c.expected_centroid.y,
                     c.expected_steps, c.message.empty() ? "" : " (" + c.message + ")");
    t += fmt::format("  uncertainty (bootstrap, {} resamples of the inlier lamps, seed {}; Efron and Tibshirani 1993): sd of the new fractions as "
                     "above; the corrected lot lands within sd x {:.4f} y {:.4f}{}\n",
                     ic.resamples, ic.seed, ic.landing_x_sd, ic.landing_y_sd,
                     ic.failed_resamples ? fmt::format(" ({} resamples gave no correction)", ic.failed_resamples) : "");
    t += "  predicted corrected lot: " + prediction_text(ic.prediction) + "\n";
    t += fmt::format("    ({})\n", kPredictionMethod);
    if (ic.prediction.warning) t += "  WARNING: " + ic.prediction.warning_text + "\n";
    if (!recipe.calibration.empty()) t += fmt::format("  calibrated model: {}\n", recipe.calibration);
    return t + "\n" + recipe_to_toml(c.corrected, {correction_note()});
}

std::string lot_correction_toml(const LotCorrection& c) { return recipe_to_toml(c.corrected, {correction_note()}); }

nlohmann::ordered_json lot_correction_json(const InlierCorrection& ic, const BlendInput& recipe, const std::string& recipe_path) {
    const LotCorrection& c = ic.correction;
    using J = nlohmann::ordered_json;
    auto xy = [](const Chromaticity& p) { return J{{"x", p.x}, {"y", p.y}}; };
    J j;
    j["recipe"] = recipe_path;
    j["feasible"] = c.feasible;
    j["message"] = c.message;
    j["lot_centroid"] = xy(c.lot_centroid);
    j["model_centroid"] = xy(c.model_centroid);
    j["target"] = xy(c.target);
    j["offset_steps"] = c.offset_steps;
    j["expected_centroid"] = xy(c.expected_centroid);
    j["expected_steps"] = c.expected_steps;
    j["components"] = J::array();
    for (std::size_t i = 0; i < c.old_fractions.size(); ++i)
        j["components"].push_back({{"label", recipe.components[i].label},
                                   {"old_mass_fraction", c.old_fractions[i]},
                                   {"new_mass_fraction", c.new_fractions[i]},
                                   {"change", c.new_fractions[i] - c.old_fractions[i]},
                                   {"new_mass_fraction_sd", i < ic.fraction_sd.size() ? number_or_null(ic.fraction_sd[i]) : J(nullptr)}});
    j["corrected_recipe_toml"] = lot_correction_toml(c);
    j["calibration"] = recipe.calibration.empty() ? J(nullptr) : J(recipe.calibration);
    j["centroid_from"] = "inliers";
    j["inliers"] = ic.inliers;
    j["outliers"] = ic.outliers;
    j["all_lamps_centroid"] = xy(ic.all_centroid);
    j["outlier_shift_steps"] = number_or_null(ic.outlier_shift_steps);
    j["bootstrap"] = {{"resamples", ic.resamples}, {"seed", ic.seed}, {"failed_resamples", ic.failed_resamples},
                      {"landing_x_sd", number_or_null(ic.landing_x_sd)}, {"landing_y_sd", number_or_null(ic.landing_y_sd)}};
    const CorrectedLotPrediction& p = ic.prediction;
    J fails = J::array();
    for (const auto& [kind, n] : p.failures) fails.push_back({{"limit", kind}, {"lamps", n}});
    j["prediction"] = {{"lamps", p.lamps},
                       {"passing", p.passing},
                       {"pass_share", number_or_null(p.pass_share)},
                       {"mean_Ra", number_or_null(p.mean_ra)},
                       {"mean_R9", number_or_null(p.mean_r9)},
                       {"centroid", {{"x", number_or_null(p.centroid.x)}, {"y", number_or_null(p.centroid.y)}}},
                       {"centroid_steps", number_or_null(p.centroid_steps)},
                       {"inlier_centroid", {{"x", number_or_null(p.inlier_centroid.x)}, {"y", number_or_null(p.inlier_centroid.y)}}},
                       {"inlier_centroid_steps", number_or_null(p.inlier_centroid_steps)},
                       {"failures", std::move(fails)},
                       {"warning", p.warning ? J(p.warning_text) : J(nullptr)}};
    return j;
}

std::string lot_correction_html(const InlierCorrection& ic, const BlendInput& recipe) {
    const LotCorrection& c = ic.correction;
    std::string html = fmt::format("<section id=\"correction\"><h2>Corrected recipe</h2><p>From the centroid of the {} inlier lamps{}.</p>", ic.inliers,
                                   ic.outliers ? fmt::format(" (the {} outliers left out move it {:.2f} MacAdam steps)", ic.outliers, ic.outlier_shift_steps) : "");
    html += "<table><tr><th>component</th><th>was</th><th>new</th><th>change</th><th>bootstrap sd</th></tr>";
    for (std::size_t i = 0; i < c.old_fractions.size(); ++i)
        html += fmt::format("<tr><td>{}</td><td>{:.4f}</td><td>{:.4f}</td><td>{}</td><td>{}</td></tr>", xml_escape(recipe.components[i].label),
                            c.old_fractions[i], c.new_fractions[i], format_signed(c.new_fractions[i] - c.old_fractions[i], 4),
                            i < ic.fraction_sd.size() ? format_fixed(ic.fraction_sd[i], 4, "-") : "-");
    html += fmt::format("</table><p>Expected centroid x {:.4f}, y {:.4f}: {:.2f} MacAdam steps from the target. {}</p>", c.expected_centroid.x,
                        c.expected_centroid.y, c.expected_steps, xml_escape(c.message));
    html += fmt::format("<p>Bootstrap over the inlier lamps ({} resamples, seed {}; Efron and Tibshirani 1993): the corrected lot lands within sd x "
                        "{:.4f}, y {:.4f}.</p>",
                        ic.resamples, ic.seed, ic.landing_x_sd, ic.landing_y_sd);
    html += fmt::format("<p id=\"prediction\">Predicted corrected lot: {} ({}).</p>", xml_escape(prediction_text(ic.prediction)), kPredictionMethod);
    if (ic.prediction.warning) html += fmt::format("<p id=\"prediction-warning\" class=\"verdict some-fail\">Warning: {}</p>", xml_escape(ic.prediction.warning_text));
    return html + "<pre>" + xml_escape(recipe_to_toml(c.corrected, {correction_note()})) + "</pre></section>";
}

}  // namespace lampwright
