#include "lampwright/report/drift_report.hpp"

#include "lampwright/core/format.hpp"
#include "lampwright/core/statistics.hpp"
#include "lampwright/report/svg_plot.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>

namespace lampwright {

namespace {

const char* verdict(const DriftComponent& c) { return c.moved ? "moved" : "within uncertainty"; }

std::string pct(double v, int decimals = 2) { return format_fixed(100 * v, decimals, "-"); }
std::string signed_pct(double v, int decimals = 2) { return format_signed(100 * v, decimals, "-"); }

std::vector<double> used_residuals(const DriftDiagnosis& d) {
    std::vector<double> r;
    for (const auto& l : d.lamps)
        if (l.used && std::isfinite(l.residual)) r.push_back(l.residual);
    return r;
}

std::string method_text(const DriftDiagnosis& d) {
    return fmt::format(
        "Method: each lamp, and the lot's centroid spectrum (the mean of the lamps used, each scaled to unit sum over 380-780 nm), is "
        "unmixed against the recipe's components by non-negative least squares (Lawson and Hanson 1974) with free discharge lines, "
        "through a {} nm triangular bandpass; the mass fractions are the blend model's inverse (as lampwright unmix). Uncertainty: {}; "
        "a component moved when |change| > {:g} x its uncertainty. A change of one phosphor's brightness or absorption shows as a "
        "change of its apparent mass fraction (and, through the normalisation, small opposite changes of the others).",
        d.bandwidth_nm, d.uncertainty_basis, kDriftSignificance);
}

std::string wrap(const std::string& text, std::size_t width, const std::string& indent) {
    std::string out, line;
    std::size_t start = 0;
    while (start < text.size()) {
        std::size_t end = text.find(' ', start);
        if (end == std::string::npos) end = text.size();
        const std::string word = text.substr(start, end - start);
        if (!line.empty() && line.size() + 1 + word.size() > width) {
            out += indent + line + "\n";
            line.clear();
        }
        line += (line.empty() ? "" : " ") + word;
        start = end + 1;
    }
    if (!line.empty()) out += indent + line + "\n";
    return out;
}

}  // namespace

std::string drift_text(const DriftDiagnosis& d, const std::string& recipe_path) {
    std::size_t outliers = 0, failed = 0;
    for (const auto& l : d.lamps) {
        if (l.outlier) ++outliers;
        if (!l.error.empty()) ++failed;
    }
    const auto res = used_residuals(d);
    std::string t = fmt::format("\nDrift diagnosis against {} (the recipe's components unmixed from the lot)\n", recipe_path);
    t += fmt::format("  {} lamp{} used{}{}; centroid spectrum residual {:.4f}, lamps' residual median {} max {} (relative L2 over 380-780 nm)\n",
                     d.lamps_used, d.lamps_used == 1 ? "" : "s", outliers ? fmt::format(" ({} outlier{} left out)", outliers, outliers == 1 ? "" : "s") : "",
                     failed ? fmt::format(", {} not unmixed", failed) : "", d.centroid_residual,
                     res.empty() ? "-" : format_fixed(median(res), 4), res.empty() ? "-" : format_fixed(*std::max_element(res.begin(), res.end()), 4));
    t += fmt::format("  {:<34} {:>8} {:>8} {:>8} {:>8} {:>8} {:>6}  {}\n", "component", "recipe %", "lot %", "unmix sd", "lamp se", "change", "z",
                     "verdict");
    for (const auto& c : d.components)
        t += fmt::format("  {:<34} {:>8} {:>8} {:>8} {:>8} {:>8} {:>6}  {}\n", c.label, pct(c.recipe_fraction), pct(c.lot_fraction),
                         pct(c.lot_fraction_sd, 3), pct(c.standard_error, 3), signed_pct(c.change), format_signed(c.z, 1, "-"), verdict(c));
    if (d.most_moved >= 0) {
        const auto& c = d.components[static_cast<std::size_t>(d.most_moved)];
        t += fmt::format("  moved most: {} ({} percentage points of mass, z {})\n", c.label, signed_pct(c.change), format_signed(c.z, 1));
    } else {
        t += "  no component moved beyond its uncertainty\n";
    }
    for (const auto& l : d.lamps)
        if (!l.error.empty()) t += fmt::format("  {} not unmixed: {}\n", l.name, l.error);
    for (const auto& n : d.notes) t += "  note: " + n + "\n";
    t += wrap(method_text(d), 100, "  ");
    return t;
}

nlohmann::ordered_json drift_json(const DriftDiagnosis& d, const std::string& recipe_path) {
    using J = nlohmann::ordered_json;
    J j;
    j["recipe"] = recipe_path;
    j["lamps_used"] = d.lamps_used;
    j["bandwidth_nm"] = d.bandwidth_nm;
    j["centroid_residual"] = number_or_null(d.centroid_residual);
    j["centroid_discharge_line_fraction"] = number_or_null(d.centroid_line_fraction);
    j["uncertainty_basis"] = d.uncertainty_basis;
    j["significance"] = kDriftSignificance;
    j["most_moved"] = d.most_moved >= 0 ? J(d.components[static_cast<std::size_t>(d.most_moved)].label) : J(nullptr);
    J comps = J::array();
    for (const auto& c : d.components)
        comps.push_back({{"label", c.label},
                         {"recipe_mass_fraction", number_or_null(c.recipe_fraction)},
                         {"lot_mass_fraction", number_or_null(c.lot_fraction)},
                         {"lot_mass_fraction_sd", number_or_null(c.lot_fraction_sd)},
                         {"lamp_mean", number_or_null(c.lamp_mean)},
                         {"lamp_sd", number_or_null(c.lamp_sd)},
                         {"standard_error", number_or_null(c.standard_error)},
                         {"uncertainty", number_or_null(c.uncertainty)},
                         {"change", number_or_null(c.change)},
                         {"z", number_or_null(c.z)},
                         {"moved", c.moved},
                         {"verdict", verdict(c)}});
    j["components"] = std::move(comps);
    J lamps = J::array();
    for (const auto& l : d.lamps) {
        J f = J::array();
        for (double v : l.fractions) f.push_back(number_or_null(v));
        lamps.push_back({{"name", l.name}, {"used", l.used}, {"outlier", l.outlier}, {"residual", number_or_null(l.residual)},
                         {"mass_fractions", std::move(f)}, {"error", l.error.empty() ? J(nullptr) : J(l.error)}});
    }
    j["lamps"] = std::move(lamps);
    j["notes"] = d.notes;
    return j;
}

std::vector<std::string> drift_lamp_columns(const DriftDiagnosis& d) {
    std::vector<std::string> c{"unmix_residual"};
    for (std::size_t i = 0; i < d.components.size(); ++i) {
        c.push_back(fmt::format("u{}_label", i + 1));
        c.push_back(fmt::format("u{}_mass_fraction", i + 1));
    }
    return c;
}

std::vector<std::string> drift_lamp_values(const DriftDiagnosis& d, std::size_t lamp) {
    std::vector<std::string> v;
    const LampUnmix* l = lamp < d.lamps.size() ? &d.lamps[lamp] : nullptr;
    v.push_back(l ? format_fixed(l->residual, 6) : "");
    for (std::size_t i = 0; i < d.components.size(); ++i) {
        v.push_back(d.components[i].label);
        v.push_back(l && i < l->fractions.size() ? format_fixed(l->fractions[i], 6) : "");
    }
    return v;
}

namespace {

constexpr const char* kRecipeColour = "#7f7f7f";
constexpr const char* kLotColour = "#1f5fa8";
constexpr const char* kMovedColour = "#d62728";
constexpr int kChartWidth = 600, kChartHeight = 320, kLegend = 170;

std::vector<std::pair<double, std::string>> component_ticks(const DriftDiagnosis& d) {
    std::vector<std::pair<double, std::string>> t;
    for (std::size_t i = 0; i < d.components.size(); ++i) t.emplace_back(static_cast<double>(i + 1), d.components[i].short_label);
    return t;
}

double bar_of(const DriftComponent& c) { return std::isfinite(c.uncertainty) ? kDriftSignificance * c.uncertainty : 0.0; }

SvgPolygon error_bar(double x, double lo, double hi, const std::string& colour, const std::string& title) {
    SvgPolygon p;
    p.closed = false;
    const double cap = 0.06;
    // One polyline: lower cap, the bar, upper cap.
    p.x = {x - cap, x + cap, x, x, x - cap, x + cap};
    p.y = {lo, lo, lo, hi, hi, hi};
    p.stroke = colour;
    p.stroke_width = 1.5;
    p.css_class = "error-bar";
    p.title = title;
    return p;
}

std::string legend(const SvgPlotArea& area, bool share_chart) {
    const int lx = area.right + 10, ly = area.top;
    std::string s = fmt::format(R"(<g class="legend" font-size="11"><rect x="{}" y="{}" width="{}" height="{}" fill="white" stroke="#999"/>)", lx, ly,
                                kLegend - 16, share_chart ? 76 : 60);
    int y = ly + 14;
    if (share_chart) {
        s += fmt::format(R"(<polygon points="{},{} {},{} {},{} {},{}" fill="{}"/><text x="{}" y="{}">recipe</text>)", lx + 12, y - 5, lx + 17, y,
                         lx + 12, y + 5, lx + 7, y, kRecipeColour, lx + 24, y + 4);
        y += 16;
    }
    s += fmt::format(R"(<circle cx="{}" cy="{}" r="4" fill="{}"/><text x="{}" y="{}">lot (unmixed)</text>)", lx + 12, y, kLotColour, lx + 24, y + 4);
    y += 16;
    s += fmt::format(R"(<circle cx="{}" cy="{}" r="4" fill="{}"/><text x="{}" y="{}">lot, moved</text>)", lx + 12, y, kMovedColour, lx + 24, y + 4);
    y += 16;
    s += fmt::format(R"(<path d="M{} {}V{}M{} {}H{}M{} {}H{}" stroke="#333" stroke-width="1.5"/><text x="{}" y="{}">± {:g} standard errors</text></g>)",
                     lx + 12, y - 6, y + 6, lx + 9, y - 6, lx + 15, lx + 9, y + 6, lx + 15, lx + 24, y + 4, kDriftSignificance);
    return s;
}

}  // namespace

std::string drift_share_svg(const DriftDiagnosis& d) {
    const std::size_t n = d.components.size();
    double top = 0;
    for (const auto& c : d.components) top = std::max({top, 100 * c.recipe_fraction, 100 * (c.lot_fraction + bar_of(c))});
    SvgOverlay ov;
    ov.id = "drift-chart";
    ov.css_class = "chart drift";
    ov.legend_width = kLegend;
    for (std::size_t i = 0; i < n; ++i) {
        const auto& c = d.components[i];
        const double x = static_cast<double>(i + 1);
        SvgMarker r;
        r.x = x - 0.12, r.y = 100 * c.recipe_fraction;
        r.shape = SvgMarker::Shape::diamond;
        r.size = 6;
        r.colour = kRecipeColour;
        r.css_class = "recipe";
        r.title = fmt::format("{}: recipe {} %", c.label, pct(c.recipe_fraction));
        ov.markers.push_back(r);
        const std::string colour = c.moved ? kMovedColour : kLotColour;
        const double b = 100 * bar_of(c);
        if (b > 0)
            ov.polygons.push_back(error_bar(x + 0.12, 100 * c.lot_fraction - b, 100 * c.lot_fraction + b, colour,
                                            fmt::format("{}: lot {} ± {} % (±{:g} standard errors)", c.label, pct(c.lot_fraction), format_fixed(b, 2),
                                                        kDriftSignificance)));
        SvgMarker l;
        l.x = x + 0.12, l.y = 100 * c.lot_fraction;
        l.size = 4.5;
        l.colour = colour;
        l.css_class = c.moved ? "lot moved" : "lot";
        l.title = fmt::format("{}: lot {} % ({} change, {})", c.label, pct(c.lot_fraction), signed_pct(c.change), verdict(c));
        ov.markers.push_back(l);
    }
    const SvgPlotArea area = svg_plot_area(kChartWidth, kChartHeight, kLegend);
    ov.pixel_svg = legend(area, true);
    SvgAxes a{"Mass fraction per component: recipe and lot", "component", "mass fraction (%)", 0.5, static_cast<double>(n) + 0.5, 0,
              std::max(1.0, std::ceil(top * 1.1 / 5) * 5), kChartWidth, kChartHeight, component_ticks(d)};
    return svg_chart(a, {}, ov);
}

std::string drift_change_svg(const DriftDiagnosis& d) {
    const std::size_t n = d.components.size();
    double span = 0;
    for (const auto& c : d.components) span = std::max(span, std::abs(100 * c.change) + 100 * bar_of(c));
    span = span > 0 ? span * 1.15 : 1.0;
    SvgOverlay ov;
    ov.id = "drift-change-chart";
    ov.css_class = "chart drift";
    ov.legend_width = kLegend;
    SvgPolygon zero;
    zero.closed = false;
    zero.x = {0.5, static_cast<double>(n) + 0.5};
    zero.y = {0, 0};
    zero.stroke = "#333";
    zero.css_class = "zero";
    zero.title = "no change from the recipe";
    ov.polygons.push_back(zero);
    for (std::size_t i = 0; i < n; ++i) {
        const auto& c = d.components[i];
        const double x = static_cast<double>(i + 1), b = 100 * bar_of(c);
        const std::string colour = c.moved ? kMovedColour : kLotColour;
        if (b > 0) ov.polygons.push_back(error_bar(x, 100 * c.change - b, 100 * c.change + b, colour, c.label));
        SvgMarker m;
        m.x = x, m.y = 100 * c.change;
        m.size = 4.5;
        m.colour = colour;
        m.css_class = c.moved ? "change moved" : "change";
        m.title = fmt::format("{}: {} percentage points, z {} ({})", c.label, signed_pct(c.change), format_signed(c.z, 1, "-"), verdict(c));
        ov.markers.push_back(m);
    }
    const SvgPlotArea area = svg_plot_area(kChartWidth, kChartHeight, kLegend);
    ov.pixel_svg = legend(area, false);
    SvgAxes a{"Change of the lot from the recipe", "component", "lot - recipe (percentage points of mass)", 0.5, static_cast<double>(n) + 0.5, -span,
              span, kChartWidth, kChartHeight, component_ticks(d)};
    return svg_chart(a, {}, ov);
}

std::string drift_html(const DriftDiagnosis& d, const std::string& recipe_path) {
    std::string h = "<section id=\"drift\"><h2>Drift diagnosis</h2>\n";
    h += fmt::format("<p>The lot unmixed against the components of <code>{}</code>: {} lamps used.</p>\n", xml_escape(recipe_path), d.lamps_used);
    h += "<div class=\"charts\">" + drift_share_svg(d) + drift_change_svg(d) + "</div>\n";
    h += "<table id=\"drift-table\"><thead><tr><th class=\"text\">component</th><th>recipe %</th><th>lot %</th><th>unmix sd %</th><th>lamp se %</th>"
         "<th>change (points)</th><th>z</th><th class=\"text\">verdict</th></tr></thead><tbody>\n";
    for (const auto& c : d.components)
        h += fmt::format("<tr class=\"{}\"><td class=\"text\">{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td>{}</td><td class=\"text\">{}</td></tr>\n",
                         c.moved ? "moved" : "within", xml_escape(c.label), pct(c.recipe_fraction), pct(c.lot_fraction), pct(c.lot_fraction_sd, 3),
                         pct(c.standard_error, 3), signed_pct(c.change), format_signed(c.z, 1, "-"), verdict(c));
    h += "</tbody></table>\n";
    h += fmt::format("<p id=\"drift-verdict\">{}</p>\n",
                     d.most_moved >= 0 ? xml_escape(fmt::format("Moved most: {}.", d.components[static_cast<std::size_t>(d.most_moved)].label))
                                       : "No component moved beyond its uncertainty.");
    h += fmt::format("<p class=\"note\">{}</p></section>\n", xml_escape(method_text(d)));
    return h;
}

}  // namespace lampwright
