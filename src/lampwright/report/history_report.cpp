#include "lampwright/report/history_report.hpp"

#include "lampwright/core/format.hpp"
#include "lampwright/report/svg_plot.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>

namespace lampwright {

namespace {

std::string format_fixed_dash(double v, int decimals) { return format_fixed(v, decimals, "-"); }

int decimals_for(const ControlChart& c) {
    if (c.quantity.find("CCT") != std::string::npos) return 0;
    if (c.quantity.find("Ra") != std::string::npos) return 1;
    return 2;
}

bool is_out(const ControlChart& c, std::size_t i) {
    return std::find(c.out_of_control.begin(), c.out_of_control.end(), i) != c.out_of_control.end();
}

// The range a chart draws (text strip and SVG alike): the limits and every finite value; 0 to 1
// when there is nothing; widened around the middle when there is no spread worth drawing.
std::pair<double, double> drawn_span(const ControlChart& c) {
    double lo = c.lower, hi = c.upper;
    for (double v : c.values)
        if (std::isfinite(v)) {
            lo = std::isfinite(lo) ? std::min(lo, v) : v;
            hi = std::isfinite(hi) ? std::max(hi, v) : v;
        }
    if (!std::isfinite(lo) || !std::isfinite(hi)) return {0, 1};
    if (!(hi - lo > 1e-6 * std::max(1.0, std::abs(hi)))) {
        const double mid = 0.5 * (lo + hi), half = std::max(std::abs(mid) * 0.01, 1e-3);
        return {mid - half, mid + half};
    }
    return {lo, hi};
}

}  // namespace

std::string control_charts_text(const std::vector<ControlChart>& charts) {
    std::string o;
    for (const auto& c : charts) {
        const int d = decimals_for(c);
        o += fmt::format("Control chart: {}\n", c.quantity);
        if (c.values.empty()) {
            o += "  no lots recorded\n\n";
            continue;
        }
        if (!std::isfinite(c.upper)) {
            o += fmt::format("  centre {}; limits need at least two lots with a value\n", format_fixed_dash(c.centre, d));
        } else {
            o += fmt::format("  centre {}, lower limit {}, upper limit {} (mean +- 2.66 x average moving range {} over {} lots); {} out of control\n",
                             format_fixed(c.centre, d), format_fixed(c.lower, d), format_fixed(c.upper, d), format_fixed(c.average_moving_range, d + 1),
                             c.values.size(), c.out_of_control.size());
        }
        // Each lot as a mark on a strip spanning the limits and the values: '|' limits, ':' centre, '*' the lot.
        constexpr int kWidth = 41;
        const auto span = drawn_span(c);
        const double lo = span.first, hi = span.second;
        auto col = [&](double v) { return static_cast<int>(std::lround((v - lo) / (hi - lo) * (kWidth - 1))); };
        std::size_t id_width = 3;
        for (const auto& id : c.lot_ids) id_width = std::max(id_width, id.size());
        id_width = std::min<std::size_t>(id_width, 24);
        for (std::size_t i = 0; i < c.values.size(); ++i) {
            std::string strip(kWidth, ' ');
            if (std::isfinite(c.lower)) strip[static_cast<std::size_t>(col(c.lower))] = '|';
            if (std::isfinite(c.upper)) strip[static_cast<std::size_t>(col(c.upper))] = '|';
            if (std::isfinite(c.centre)) strip[static_cast<std::size_t>(col(c.centre))] = ':';
            if (std::isfinite(c.values[i])) strip[static_cast<std::size_t>(col(c.values[i]))] = '*';
            o += fmt::format("  {:>3}  {:<{}}  {:>9}  {}{}\n", i + 1, c.lot_ids[i].substr(0, id_width), id_width, format_fixed_dash(c.values[i], d),
                             strip, is_out(c, i) ? "  OUT OF CONTROL" : "");
        }
        o += '\n';
    }
    return o;
}

std::string spec_selection_text(const SpecSelection& s) {
    if (s.other_specs.empty()) return {};
    std::string others;
    for (const auto& o : s.other_specs) others += (others.empty() ? "'" : ", '") + o + "'";
    return fmt::format("showing spec '{}' ({} of {} lots); other specs: {}", s.spec, s.lots.size(), s.total_lots, others);
}

nlohmann::ordered_json spec_selection_json(const SpecSelection& s) {
    return {{"spec", s.spec}, {"lots", s.lots.size()}, {"total_lots", s.total_lots}, {"other_specs", s.other_specs}};
}

std::string control_charts_svg(const std::vector<ControlChart>& charts, const std::string& note) {
    constexpr int kW = 640, kH = 300;
    std::string body;
    int y0 = 0;
    for (const auto& c : charts) {
        const std::size_t n = c.values.size();
        SvgAxes axes;
        axes.title = "Control chart: " + c.quantity + " (centre, mean +- 2.66 MR-bar)" + (note.empty() ? "" : " - " + note);
        axes.x_label = "lot id (recording order)";
        axes.y_label = c.quantity;
        axes.width = kW;
        axes.height = kH;
        axes.x_min = 0.5;
        axes.x_max = static_cast<double>(std::max<std::size_t>(n, 1)) + 0.5;
        const auto span = drawn_span(c);
        const double lo = span.first, hi = span.second;
        // The lots by id on the x axis (thinned by svg_chart when they would overlap).
        for (std::size_t i = 0; i < n && i < c.lot_ids.size(); ++i) axes.x_tick_labels.push_back({static_cast<double>(i + 1), c.lot_ids[i]});
        const double pad = 0.12 * (hi - lo);
        axes.y_min = lo - pad;
        axes.y_max = hi + pad;
        std::vector<SvgSeries> series;
        SvgSeries line{"lot value", {}, {}, "#1f77b4", false}, dots{"", {}, {}, "#1f77b4", true}, out{"out of control", {}, {}, "#d62728", true};
        for (std::size_t i = 0; i < n; ++i) {
            if (!std::isfinite(c.values[i])) continue;
            const double x = static_cast<double>(i + 1);
            line.x.push_back(x);
            line.y.push_back(c.values[i]);
            (is_out(c, i) ? out : dots).x.push_back(x);
            (is_out(c, i) ? out : dots).y.push_back(c.values[i]);
        }
        series.push_back(line);
        auto horizontal = [&](const std::string& label, double v, const std::string& colour) {
            if (std::isfinite(v)) series.push_back({label, {axes.x_min, axes.x_max}, {v, v}, colour, false});
        };
        horizontal(fmt::format("centre {}", format_fixed(c.centre, decimals_for(c))), c.centre, "#2ca02c");
        horizontal(fmt::format("upper limit {}", format_fixed(c.upper, decimals_for(c))), c.upper, "#ff7f0e");
        horizontal(fmt::format("lower limit {}", format_fixed(c.lower, decimals_for(c))), c.lower, "#ff7f0e");
        series.push_back(dots);
        if (!out.x.empty()) series.push_back(out);
        std::string chart = svg_chart(axes, series);
        // Nest each chart in the document at its own height.
        chart.replace(0, 4, fmt::format(R"(<svg x="0" y="{}")", y0));
        body += chart;
        y0 += kH;
    }
    return fmt::format(R"(<svg xmlns="http://www.w3.org/2000/svg" width="{0}" height="{1}" viewBox="0 0 {0} {1}">)", kW, std::max(y0, 1)) + "\n" + body +
           "</svg>\n";
}

nlohmann::ordered_json control_charts_json(const std::vector<ControlChart>& charts) {
    nlohmann::ordered_json a = nlohmann::ordered_json::array();
    for (const auto& c : charts) {
        nlohmann::ordered_json vals = nlohmann::ordered_json::array(), out = nlohmann::ordered_json::array();
        for (double v : c.values) vals.push_back(number_or_null(v));
        for (std::size_t i : c.out_of_control) out.push_back(c.lot_ids[i]);
        a.push_back({{"quantity", c.quantity}, {"centre", number_or_null(c.centre)}, {"lower", number_or_null(c.lower)},
                     {"upper", number_or_null(c.upper)},
                    {"average_moving_range", number_or_null(c.average_moving_range)}, {"lot_ids", c.lot_ids}, {"values", vals}, {"out_of_control", out}});
    }
    return a;
}

// ---- lot list presentation ----

std::vector<std::string> lot_columns() {
    return {"lot_id",  "recorded_at", "spec_name", "spec_path", "recipe_path", "lamps",   "passed",     "bad_files", "pass_rate",
            "outliers", "centroid_x", "centroid_y", "centroid_steps", "mean_cct_K", "sd_cct_K", "mean_duv", "sd_duv", "mean_Ra",
            "sd_Ra",   "mean_R9",     "sd_R9",      "mean_steps", "sd_steps",   "lamp_rows", "lampwright_version"};
}

std::vector<std::string> lot_values(const LotRecord& l) {
    return {l.lot_id,
            l.recorded_at,
            l.spec_name,
            l.spec_path,
            l.recipe_path,
            std::to_string(l.lamps),
            std::to_string(l.passed),
            std::to_string(l.bad_files),
            format_fixed(l.pass_rate, 4),
            std::to_string(l.outliers),
            format_fixed(l.centroid_x, 5),
            format_fixed(l.centroid_y, 5),
            format_fixed(l.centroid_steps, 3),
            format_fixed(l.mean_cct_K, 1),
            format_fixed(l.sd_cct_K, 1),
            format_fixed(l.mean_duv, 5),
            format_fixed(l.sd_duv, 5),
            format_fixed(l.mean_ra, 2),
            format_fixed(l.sd_ra, 2),
            format_fixed(l.mean_r9, 2),
            format_fixed(l.sd_r9, 2),
            format_fixed(l.mean_steps, 3),
            format_fixed(l.sd_steps, 3),
            std::to_string(l.lamp_rows),
            l.lampwright_version};
}

nlohmann::ordered_json lot_json(const LotRecord& l) {
    return {{"lot_id", l.lot_id},
            {"recorded_at", l.recorded_at},
            {"spec_name", l.spec_name},
            {"spec_path", l.spec_path},
            {"spec_target", l.spec_target},
            {"recipe_path", l.recipe_path},
            {"lamps", l.lamps},
            {"passed", l.passed},
            {"bad_files", l.bad_files},
            {"pass_rate", number_or_null(l.pass_rate)},
            {"outliers", l.outliers},
            {"centroid_x", number_or_null(l.centroid_x)},
            {"centroid_y", number_or_null(l.centroid_y)},
            {"centroid_steps", number_or_null(l.centroid_steps)},
            {"mean_cct_K", number_or_null(l.mean_cct_K)},
            {"sd_cct_K", number_or_null(l.sd_cct_K)},
            {"mean_duv", number_or_null(l.mean_duv)},
            {"sd_duv", number_or_null(l.sd_duv)},
            {"mean_Ra", number_or_null(l.mean_ra)},
            {"sd_Ra", number_or_null(l.sd_ra)},
            {"mean_R9", number_or_null(l.mean_r9)},
            {"sd_R9", number_or_null(l.sd_r9)},
            {"mean_steps", number_or_null(l.mean_steps)},
            {"sd_steps", number_or_null(l.sd_steps)},
            {"lamp_rows", l.lamp_rows},
            {"lampwright_version", l.lampwright_version}};
}

std::string lots_text(const std::vector<LotRecord>& lots) {
    if (lots.empty()) return "No lots recorded.\n";
    std::size_t w = 6;
    for (const auto& l : lots) w = std::max(w, l.lot_id.size());
    std::size_t vw = 7;  // "version"; "unknown" for lots recorded before the version was stored
    for (const auto& l : lots) vw = std::max(vw, l.lampwright_version.size());
    std::string o = fmt::format("{:>3}  {:<{}}  {:<20}  {:>6}  {:>6}  {:>4}  {:>8}  {:>8}  {:>6}  {:>13}  {:>13}  {:>6}  {:>8}  {:<{}}  {}\n", "#", "lot", w,
                                "recorded (UTC)", "lamps", "pass%", "bad", "x", "y", "steps", "CCT K (sd)", "Ra (sd)", "R9", "Duv", "version", vw, "spec");
    for (std::size_t i = 0; i < lots.size(); ++i) {
        const auto& l = lots[i];
        o += fmt::format("{:>3}  {:<{}}  {:<20}  {:>6}  {:>6}  {:>4}  {:>8}  {:>8}  {:>6}  {:>13}  {:>13}  {:>6}  {:>8}  {:<{}}  {}\n", i + 1, l.lot_id, w,
                         l.recorded_at, l.lamps, format_fixed_dash(100 * l.pass_rate, 1), l.bad_files, format_fixed_dash(l.centroid_x, 4),
                         format_fixed_dash(l.centroid_y, 4), format_fixed_dash(l.centroid_steps, 2),
                         fmt::format("{} ({})", format_fixed_dash(l.mean_cct_K, 0), format_fixed_dash(l.sd_cct_K, 0)),
                         fmt::format("{} ({})", format_fixed_dash(l.mean_ra, 1), format_fixed_dash(l.sd_ra, 1)), format_fixed_dash(l.mean_r9, 1),
                         format_fixed_dash(l.mean_duv, 4), l.lampwright_version, vw, l.spec_name);
    }
    return o;
}

}  // namespace lampwright
