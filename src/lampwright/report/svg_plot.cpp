#include "lampwright/report/svg_plot.hpp"

#include "lampwright/colour/cie_tables.hpp"
#include "lampwright/colour/colorimetry.hpp"
#include "lampwright/colour/temperature.hpp"
#include "lampwright/core/format.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <array>
#include <cmath>

namespace lampwright {

namespace {

constexpr int kLeft = 64, kRight = 16, kTop = 36, kBottom = 48;
constexpr double kFontSize = 11;               // the charts' font-size
constexpr std::size_t kLegendChars = 28;       // longer series labels are cut (the full one is in the point's tooltip)
constexpr int kLegendGap = 10;                 // between the plot area and the legend column

// A series label as the legend shows it.
std::string legend_label(const std::string& label) {
    if (label.size() <= kLegendChars) return label;
    std::size_t cut = kLegendChars - 1;
    while (cut > 0 && (static_cast<unsigned char>(label[cut]) & 0xC0) == 0x80) --cut;  // not inside a UTF-8 character
    return label.substr(0, cut) + "\u2026";
}

struct Frame {
    SvgAxes a;
    int legend = 0;  // pixels kept right of the plot area for the legend (with its gap)
    int right() const { return a.width - kRight - legend; }
    double px(double x) const { return kLeft + (x - a.x_min) / (a.x_max - a.x_min) * (right() - kLeft); }
    double py(double y) const { return a.height - kBottom - (y - a.y_min) / (a.y_max - a.y_min) * (a.height - kTop - kBottom); }
    bool inside(double x, double y) const { return x >= a.x_min && x <= a.x_max && y >= a.y_min && y <= a.y_max; }
};

double nice_step(double range) {
    const double raw = range / 6;
    const double mag = std::pow(10, std::floor(std::log10(raw)));
    for (double m : {1.0, 2.0, 2.5, 5.0, 10.0})
        if (raw <= m * mag) return m * mag;
    return 10 * mag;
}

// Decimals that show every multiple of the tick step exactly (2 -> 0, 0.25 -> 2, 0.002 -> 3).
int tick_decimals(double step) {
    for (int d = 0; d < 12; ++d) {
        const double scaled = step * std::pow(10.0, d);
        if (std::abs(scaled - std::round(scaled)) < 1e-6 * scaled) return d;
    }
    return 12;
}

std::string attributes(const std::string& id, const std::string& css_class) {
    std::string o;
    if (!id.empty()) o += fmt::format(R"( id="{}")", xml_escape(id));
    if (!css_class.empty()) o += fmt::format(R"( class="{}")", xml_escape(css_class));
    return o;
}

// Which of the text x tick labels to draw: every k-th, the smallest k for which neighbours do not
// overlap (with a 6 px gap).
std::vector<std::size_t> thinned_labels(const Frame& f) {
    const auto& l = f.a.x_tick_labels;
    std::vector<std::size_t> keep;
    if (l.empty()) return keep;
    double widest = 0;
    for (const auto& [x, text] : l) widest = std::max(widest, svg_text_width(text, kFontSize));
    for (std::size_t k = 1; k <= l.size(); ++k) {
        keep.clear();
        for (std::size_t i = 0; i < l.size(); i += k) keep.push_back(i);
        bool apart = true;
        for (std::size_t j = 1; j < keep.size() && apart; ++j)
            apart = std::abs(f.px(l[keep[j]].first) - f.px(l[keep[j - 1]].first)) >= widest + 6;
        if (apart) break;
    }
    return keep;
}

std::string frame_svg(const Frame& f, const std::string& id = "", const std::string& css_class = "") {
    const auto& a = f.a;
    std::string o = fmt::format(R"(<svg xmlns="http://www.w3.org/2000/svg"{2} width="{0}" height="{1}" viewBox="0 0 {0} {1}" font-family="sans-serif" font-size="11">)",
                                a.width, a.height, attributes(id, css_class));
    o += fmt::format(R"(<rect x="0" y="0" width="{}" height="{}" fill="white"/>)", a.width, a.height);
    o += fmt::format(R"(<text x="{}" y="20" text-anchor="middle" font-size="13">{}</text>)", a.width / 2, xml_escape(a.title));
    const double sx = nice_step(a.x_max - a.x_min), sy = nice_step(a.y_max - a.y_min);
    const int xdec = tick_decimals(sx), ydec = tick_decimals(sy);
    // Ticks at whole multiples of the step (k * step, not a running sum, so 0 is exactly 0), their
    // labels through format_fixed (never "-0").
    if (a.x_tick_labels.empty()) {
        for (double k = std::ceil(a.x_min / sx - 1e-9); k * sx <= a.x_max + 1e-9 * sx; ++k) {
            const double x = k * sx;
            o += fmt::format(R"(<line x1="{0:.1f}" y1="{1}" x2="{0:.1f}" y2="{2}" stroke="#ddd"/>)", f.px(x), kTop, a.height - kBottom);
            o += fmt::format(R"(<text x="{:.1f}" y="{}" text-anchor="middle">{}</text>)", f.px(x), a.height - kBottom + 14, format_fixed(x, xdec));
        }
    } else {
        o += "<g class=\"x-tick-labels\">";
        for (std::size_t i : thinned_labels(f)) {
            const auto& [x, text] = a.x_tick_labels[i];
            o += fmt::format(R"(<line x1="{0:.1f}" y1="{1}" x2="{0:.1f}" y2="{2}" stroke="#ddd"/>)", f.px(x), kTop, a.height - kBottom);
            o += fmt::format(R"(<text class="x-tick-label" x="{:.1f}" y="{}" text-anchor="middle">{}</text>)", f.px(x), a.height - kBottom + 14,
                             xml_escape(text));
        }
        o += "</g>";
    }
    for (double k = std::ceil(a.y_min / sy - 1e-9); k * sy <= a.y_max + 1e-9 * sy; ++k) {
        const double y = k * sy;
        o += fmt::format(R"(<line x1="{0}" y1="{1:.1f}" x2="{2}" y2="{1:.1f}" stroke="#ddd"/>)", kLeft, f.py(y), f.right());
        o += fmt::format(R"(<text x="{}" y="{:.1f}" text-anchor="end">{}</text>)", kLeft - 4, f.py(y) + 4, format_fixed(y, ydec));
    }
    o += fmt::format(R"(<rect class="plot-area" x="{}" y="{}" width="{}" height="{}" fill="none" stroke="#333"/>)", kLeft, kTop, f.right() - kLeft,
                     a.height - kTop - kBottom);
    o += fmt::format(R"(<text x="{}" y="{}" text-anchor="middle">{}</text>)", (kLeft + f.right()) / 2, a.height - 10, xml_escape(a.x_label));
    o += fmt::format(R"svg(<text x="14" y="{}" text-anchor="middle" transform="rotate(-90 14 {})">{}</text>)svg", (kTop + a.height - kBottom) / 2,
                     (kTop + a.height - kBottom) / 2, xml_escape(a.y_label));
    return o;
}

// The plot area as a nested <svg> with the outer coordinates: what is drawn inside is clipped to it.
std::string clip_open(const Frame& f) {
    const int w = f.right() - kLeft, h = f.a.height - kTop - kBottom;
    return fmt::format(R"(<svg x="{0}" y="{1}" width="{2}" height="{3}" viewBox="{0} {1} {2} {3}" overflow="hidden">)", kLeft, kTop, w, h);
}

// A line through the points inside the window and their neighbours (so it reaches the edge and
// is clipped there); a run of points outside breaks it into several polylines.
std::string polyline(const Frame& f, const std::vector<double>& x, const std::vector<double>& y, const std::string& colour, double width) {
    std::string o, pts;
    auto flush = [&] {
        if (!pts.empty()) o += fmt::format(R"(<polyline fill="none" stroke="{}" stroke-width="{}" points="{}"/>)", colour, width, pts);
        pts.clear();
    };
    const std::size_t n = std::min(x.size(), y.size());
    auto in = [&](std::size_t i) { return i < n && f.inside(x[i], y[i]); };
    for (std::size_t i = 0; i < n; ++i) {
        if (in(i) || (i > 0 && in(i - 1)) || in(i + 1))
            pts += fmt::format("{:.1f},{:.1f} ", f.px(x[i]), f.py(y[i]));
        else
            flush();
    }
    flush();
    if (o.empty()) o = fmt::format(R"(<polyline fill="none" stroke="{}" stroke-width="{}" points=""/>)", colour, width);
    return o;
}

std::string overlay_under(const Frame& f, const SvgOverlay& ov) {
    std::string o;
    for (const auto& p : ov.polygons) {
        std::string pts;
        for (std::size_t i = 0; i < std::min(p.x.size(), p.y.size()); ++i) pts += fmt::format("{:.2f},{:.2f} ", f.px(p.x[i]), f.py(p.y[i]));
        if (!pts.empty()) pts.pop_back();
        o += fmt::format(R"(<{}{} points="{}" fill="{}" fill-opacity="{:g}" stroke="{}" stroke-width="{:g}"{})", p.closed ? "polygon" : "polyline",
                         attributes(p.id, p.css_class), pts, p.closed ? xml_escape(p.fill) : "none", p.fill_opacity, xml_escape(p.stroke),
                         p.stroke_width, p.dash.empty() ? "" : fmt::format(R"( stroke-dasharray="{}")", xml_escape(p.dash)));
        o += p.title.empty() ? "/>" : fmt::format("><title>{}</title></{}>", xml_escape(p.title), p.closed ? "polygon" : "polyline");
    }
    return o;
}

std::string overlay_over(const Frame& f, const SvgOverlay& ov) {
    std::string o;
    for (const auto& m : ov.markers) {
        const double x = f.px(m.x), y = f.py(m.y), r = m.size;
        const std::string attr = attributes(m.id, m.css_class), colour = xml_escape(m.colour);
        const std::string title = m.title.empty() ? "" : fmt::format("<title>{}</title>", xml_escape(m.title));
        switch (m.shape) {
            case SvgMarker::Shape::circle:
                o += fmt::format(R"(<circle{} cx="{:.1f}" cy="{:.1f}" r="{:g}" fill="{}" stroke="#222" stroke-width="0.6">{}</circle>)", attr, x, y, r, colour, title);
                break;
            case SvgMarker::Shape::ring:
                o += fmt::format(R"(<circle{} cx="{:.1f}" cy="{:.1f}" r="{:g}" fill="white" stroke="{}" stroke-width="2">{}</circle>)", attr, x, y, r, colour, title);
                break;
            case SvgMarker::Shape::diamond:
                o += fmt::format(R"(<polygon{} points="{:.1f},{:.1f} {:.1f},{:.1f} {:.1f},{:.1f} {:.1f},{:.1f}" fill="{}" stroke="white" stroke-width="1">{}</polygon>)", attr,
                                 x, y - r, x + r, y, x, y + r, x - r, y, colour, title);
                break;
            case SvgMarker::Shape::plus:
                o += fmt::format(R"(<path{} d="M{:.1f} {:.1f}H{:.1f}M{:.1f} {:.1f}V{:.1f}" stroke="{}" stroke-width="1.5" fill="none">{}</path>)", attr, x - r, y,
                                 x + r, x, y - r, y + r, colour, title);
                break;
        }
    }
    // Labels never overprint one another: a label whose box would overlap one already placed moves
    // down a line (up to three times), else it is left out (its line keeps its tooltip).
    struct Box {
        double x0, x1, y0, y1;
    };
    std::vector<Box> placed;
    for (const auto& t : ov.texts) {
        const double w = svg_text_width(t.text, kFontSize);
        const double x = f.px(t.x) + t.dx;
        const double x0 = t.anchor == "end" ? x - w : t.anchor == "middle" ? x - w / 2 : x;
        double y = f.py(t.y) + t.dy;
        auto overlaps = [&](double yy) {
            return std::any_of(placed.begin(), placed.end(), [&](const Box& b) {
                return x0 < b.x1 && b.x0 < x0 + w && yy - kFontSize < b.y1 && b.y0 < yy;
            });
        };
        int moves = 0;
        while (overlaps(y) && moves < 3) y += kFontSize + 2, ++moves;
        if (overlaps(y)) continue;
        placed.push_back({x0, x0 + w, y - kFontSize, y});
        o += fmt::format(R"(<text x="{:.1f}" y="{:.1f}" text-anchor="{}" fill="{}">{}</text>)", x, y, xml_escape(t.anchor), xml_escape(t.colour),
                         xml_escape(t.text));
    }
    return o;
}

std::string series_svg(const Frame& f, const std::vector<SvgSeries>& series) {
    std::string o;
    for (std::size_t i = 0; i < series.size(); ++i) {
        const auto& s = series[i];
        const std::string colour = s.colour.empty() ? series_colour(i) : s.colour;
        if (s.points) {
            for (std::size_t k = 0; k < s.x.size(); ++k)
                if (f.inside(s.x[k], s.y[k]))
                    o += fmt::format(R"(<circle class="point" cx="{:.1f}" cy="{:.1f}" r="3.5" fill="{}"><title>{}</title></circle>)", f.px(s.x[k]),
                                     f.py(s.y[k]), colour, xml_escape(s.label));
        } else {
            o += polyline(f, s.x, s.y, colour, 1.5);
        }
    }
    return o;
}

// The series' legend, in its own column right of the plot area (Frame::legend), so it never hides data.
std::string legend_svg(const Frame& f, const std::vector<SvgSeries>& series) {
    std::string o;
    const int x = f.right() + kLegendGap;
    int row = 0;
    for (std::size_t i = 0; i < series.size(); ++i) {
        const auto& s = series[i];
        const std::string colour = s.colour.empty() ? series_colour(i) : s.colour;
        if (s.label.empty()) continue;
        o += fmt::format(R"(<rect x="{}" y="{}" width="10" height="10" fill="{}"/><text x="{}" y="{}">{}</text>)", x, kTop + 16 * row, colour, x + 15,
                         kTop + 9 + 16 * row, xml_escape(legend_label(s.label)));
        ++row;
    }
    return o.empty() ? o : "<g class=\"legend\">" + o + "</g>";
}

// The frame of a chart: the legend column is the wider of the series' and the overlay's.
Frame frame_for(const SvgAxes& axes, const std::vector<SvgSeries>& series, const SvgOverlay& overlay) {
    return Frame{axes, std::max(svg_legend_width(series), overlay.legend_width)};
}

}  // namespace

SvgWindow svg_square_window(double x, double y, double half, int width, int height, int legend_width) {
    const SvgPlotArea area = svg_plot_area(width, height, legend_width);
    const double pw = area.right - area.left, ph = area.bottom - area.top, per_px = 2 * half / std::min(pw, ph);
    return {x - pw * per_px / 2, x + pw * per_px / 2, y - ph * per_px / 2, y + ph * per_px / 2, per_px};
}

std::string series_colour(std::size_t i) {
    static constexpr std::array<const char*, 8> c{"#1f77b4", "#d62728", "#2ca02c", "#9467bd", "#ff7f0e", "#17becf", "#8c564b", "#e377c2"};
    return c[i % c.size()];
}

std::string xml_escape(const std::string& s) {
    std::string o;
    for (char ch : s) {
        switch (ch) {
            case '&': o += "&amp;"; break;
            case '<': o += "&lt;"; break;
            case '>': o += "&gt;"; break;
            case '"': o += "&quot;"; break;
            default: o += ch;
        }
    }
    return o;
}

std::string svg_chart(const SvgAxes& axes, const std::vector<SvgSeries>& series) { return svg_chart(axes, series, SvgOverlay{}); }

double svg_text_width(const std::string& text, double font_size) {
    std::size_t chars = 0;
    for (unsigned char c : text) chars += (c & 0xC0) != 0x80;
    return 0.6 * font_size * static_cast<double>(chars);
}

int svg_legend_width(const std::vector<SvgSeries>& series) {
    double widest = 0;
    for (const auto& s : series)
        if (!s.label.empty()) widest = std::max(widest, svg_text_width(legend_label(s.label), kFontSize));
    return widest > 0 ? kLegendGap + 15 + static_cast<int>(std::ceil(widest)) : 0;
}

std::string svg_chart(const SvgAxes& axes, const std::vector<SvgSeries>& series, const SvgOverlay& overlay) {
    const Frame f = frame_for(axes, series, overlay);
    return frame_svg(f, overlay.id, overlay.css_class) + clip_open(f) + overlay_under(f, overlay) + series_svg(f, series) +
           overlay_over(f, overlay) + "</svg>" + legend_svg(f, series) + overlay.pixel_svg + "</svg>\n";
}

SvgPlotArea svg_plot_area(int width, int height, int legend_width) { return {kLeft, kTop, width - kRight - legend_width, height - kBottom}; }

std::string svg_uv_diagram(const std::string& title, const std::vector<SvgSeries>& points, double u_min, double u_max, double v_min,
                           double v_max, int width, int height) {
    return svg_uv_diagram(title, points, u_min, u_max, v_min, v_max, width, height, SvgOverlay{});
}

std::string svg_uv_diagram(const std::string& title, const std::vector<SvgSeries>& points, double u_min, double u_max, double v_min,
                           double v_max, int width, int height, const SvgOverlay& overlay) {
    SvgAxes a{title, "u'", "v'", u_min, u_max, v_min, v_max, width, height};
    auto pts = points;
    for (auto& s : pts) s.points = true;
    const Frame f = frame_for(a, pts, overlay);
    std::string o = frame_svg(f, overlay.id, overlay.css_class) + clip_open(f) + overlay_under(f, overlay);
    // Spectrum locus (CIE 1931 observer), 380-700 nm.
    const auto& cmf = colour_matching_functions(Observer::cie1931_2deg);
    std::vector<double> lu, lv;
    for (int nm = 380; nm <= 700; ++nm) {
        const int j = nm - kColourFirstNm;
        const UV p = uv_1976({cmf.xyz[0][j], cmf.xyz[1][j], cmf.xyz[2][j]});
        lu.push_back(p.u);
        lv.push_back(p.v);
    }
    o += polyline(f, lu, lv, "#888", 1.0);
    // Planckian locus with CCT ticks (CIE 1960 v = 2/3 v'), from the Ohno table and computed once: every diagram draws
    // the same curve, and the page of lampwright serve redraws one for each slider move.
    struct LocusPoint {
        double t;
        UV uv;
    };
    static const std::vector<LocusPoint> locus = [] {
        std::vector<LocusPoint> l;
        for (double t = 1000; t <= 25000; t *= 1.005) l.push_back({t, planck_uv_tabulated(t)});
        return l;
    }();
    // The candidate tick temperatures, every 50 K (the finest tick step below), also once.
    static const std::vector<LocusPoint> tick_points = [] {
        std::vector<LocusPoint> l;
        for (double t = 1000; t <= 20000; t += 50) l.push_back({t, planck_uv_tabulated(t)});
        return l;
    }();
    std::vector<double> pu, pv;
    for (const auto& q : locus) {
        pu.push_back(q.uv.u);
        pv.push_back(1.5 * q.uv.v);
    }
    o += "<g class=\"planckian-locus\">" + polyline(f, pu, pv, "#000", 1.2) + "</g>";
    // CCT ticks across the locus (along its normal on the page). A zoomed window that holds
    // fewer than three of the usual temperatures gets ticks every 100 K (or 50 K) instead.
    auto inside = [&](double t) {
        const auto it = std::find_if(tick_points.begin(), tick_points.end(), [&](const LocusPoint& q) { return q.t == t; });
        const UV p = it != tick_points.end() ? it->uv : planck_uv_tabulated(t);
        return f.inside(p.u, 1.5 * p.v);
    };
    std::vector<double> ticks;
    for (double t : {2000.0, 2500.0, 2700.0, 3000.0, 3500.0, 4000.0, 4500.0, 5000.0, 5700.0, 6500.0, 8000.0, 10000.0})
        if (inside(t)) ticks.push_back(t);
    if (ticks.size() < 3) {
        for (double step : {500.0, 200.0, 100.0, 50.0}) {
            ticks.clear();
            for (const auto& q : tick_points)
                if (std::fmod(q.t, step) == 0 && f.inside(q.uv.u, 1.5 * q.uv.v)) ticks.push_back(q.t);
            if (ticks.size() >= 3) break;
        }
        while (ticks.size() > 9) {  // thin to at most 9 labels
            std::vector<double> half;
            for (std::size_t i = 0; i < ticks.size(); i += 2) half.push_back(ticks[i]);
            ticks = half;
        }
    }
    o += "<g class=\"cct-ticks\">";
    for (double t : ticks) {
        const UV p = planck_uv_tabulated(t), p0 = planck_uv_tabulated(t * 0.999), p1 = planck_uv_tabulated(t * 1.001);
        const double x = f.px(p.u), y = f.py(1.5 * p.v);
        double tx = f.px(p1.u) - f.px(p0.u), ty = f.py(1.5 * p1.v) - f.py(1.5 * p0.v);
        const double len = std::hypot(tx, ty);
        if (!(len > 0)) continue;
        tx /= len, ty /= len;
        double nx = -ty, ny = tx;  // page normal, turned to point up the page (labels above the locus)
        if (ny > 0) nx = -nx, ny = -ny;
        o += fmt::format(R"(<line x1="{:.1f}" y1="{:.1f}" x2="{:.1f}" y2="{:.1f}" stroke="#000"/><text x="{:.1f}" y="{:.1f}" text-anchor="middle" font-size="9">{:.0f} K</text>)",
                         x - 5 * nx, y - 5 * ny, x + 5 * nx, y + 5 * ny, x + 16 * nx, y + 16 * ny + 3, t);
    }
    o += "</g>";
    o += series_svg(f, pts);
    o += overlay_over(f, overlay);
    return o + "</svg>" + legend_svg(f, pts) + overlay.pixel_svg + "</svg>\n";
}

}  // namespace lampwright
