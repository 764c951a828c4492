#include "lampwright/svg_plot.hpp"

#include "lampwright/cie_tables.hpp"
#include "lampwright/colorimetry.hpp"
#include "lampwright/temperature.hpp"

#include <fmt/format.h>

#include <array>
#include <cmath>

namespace lampwright {

namespace {

constexpr int kLeft = 64, kRight = 16, kTop = 36, kBottom = 48;

struct Frame {
    SvgAxes a;
    double px(double x) const { return kLeft + (x - a.x_min) / (a.x_max - a.x_min) * (a.width - kLeft - kRight); }
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

std::string frame_svg(const Frame& f) {
    const auto& a = f.a;
    std::string o = fmt::format(R"(<svg xmlns="http://www.w3.org/2000/svg" width="{0}" height="{1}" viewBox="0 0 {0} {1}" font-family="sans-serif" font-size="11">)",
                                a.width, a.height);
    o += fmt::format(R"(<rect x="0" y="0" width="{}" height="{}" fill="white"/>)", a.width, a.height);
    o += fmt::format(R"(<text x="{}" y="20" text-anchor="middle" font-size="13">{}</text>)", a.width / 2, xml_escape(a.title));
    const double sx = nice_step(a.x_max - a.x_min), sy = nice_step(a.y_max - a.y_min);
    const int xdec = std::max(0, static_cast<int>(-std::floor(std::log10(sx)))), ydec = std::max(0, static_cast<int>(-std::floor(std::log10(sy))));
    for (double x = std::ceil(a.x_min / sx) * sx; x <= a.x_max + 1e-12; x += sx) {
        o += fmt::format(R"(<line x1="{0:.1f}" y1="{1}" x2="{0:.1f}" y2="{2}" stroke="#ddd"/>)", f.px(x), kTop, a.height - kBottom);
        o += fmt::format(R"(<text x="{:.1f}" y="{}" text-anchor="middle">{:.{}f}</text>)", f.px(x), a.height - kBottom + 14, x, xdec + 1);
    }
    for (double y = std::ceil(a.y_min / sy) * sy; y <= a.y_max + 1e-12; y += sy) {
        o += fmt::format(R"(<line x1="{0}" y1="{1:.1f}" x2="{2}" y2="{1:.1f}" stroke="#ddd"/>)", kLeft, f.py(y), a.width - kRight);
        o += fmt::format(R"(<text x="{}" y="{:.1f}" text-anchor="end">{:.{}f}</text>)", kLeft - 4, f.py(y) + 4, y, ydec + 1);
    }
    o += fmt::format(R"(<rect x="{}" y="{}" width="{}" height="{}" fill="none" stroke="#333"/>)", kLeft, kTop, a.width - kLeft - kRight,
                     a.height - kTop - kBottom);
    o += fmt::format(R"(<text x="{}" y="{}" text-anchor="middle">{}</text>)", (kLeft + a.width - kRight) / 2, a.height - 10, xml_escape(a.x_label));
    o += fmt::format(R"svg(<text x="14" y="{}" text-anchor="middle" transform="rotate(-90 14 {})">{}</text>)svg", (kTop + a.height - kBottom) / 2,
                     (kTop + a.height - kBottom) / 2, xml_escape(a.y_label));
    return o;
}

std::string polyline(const Frame& f, const std::vector<double>& x, const std::vector<double>& y, const std::string& colour, double width) {
    std::string pts;
    for (std::size_t i = 0; i < x.size(); ++i)
        if (f.inside(x[i], y[i])) pts += fmt::format("{:.1f},{:.1f} ", f.px(x[i]), f.py(y[i]));
    return fmt::format(R"(<polyline fill="none" stroke="{}" stroke-width="{}" points="{}"/>)", colour, width, pts);
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
        if (!s.label.empty())
            o += fmt::format(R"(<rect x="{}" y="{}" width="10" height="10" fill="{}"/><text x="{}" y="{}">{}</text>)", f.a.width - kRight - 180,
                             kTop + 8 + 16 * static_cast<int>(i), colour, f.a.width - kRight - 165, kTop + 17 + 16 * static_cast<int>(i),
                             xml_escape(s.label));
    }
    return o;
}

}  // namespace

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

std::string svg_chart(const SvgAxes& axes, const std::vector<SvgSeries>& series) {
    const Frame f{axes};
    return frame_svg(f) + series_svg(f, series) + "</svg>\n";
}

std::string svg_uv_diagram(const std::string& title, const std::vector<SvgSeries>& points, double u_min, double u_max, double v_min,
                           double v_max, int width, int height) {
    SvgAxes a{title, "u'", "v'", u_min, u_max, v_min, v_max, width, height};
    const Frame f{a};
    std::string o = frame_svg(f);
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
    // Planckian locus with CCT ticks (CIE 1960 v = 2/3 v').
    std::vector<double> pu, pv;
    for (double t = 1000; t <= 25000; t *= 1.02) {
        const UV p = planck_uv(t);
        pu.push_back(p.u);
        pv.push_back(1.5 * p.v);
    }
    o += "<g class=\"planckian-locus\">" + polyline(f, pu, pv, "#000", 1.2) + "</g>";
    for (double t : {2000.0, 2500.0, 2700.0, 3000.0, 3500.0, 4000.0, 4500.0, 5000.0, 5700.0, 6500.0, 8000.0, 10000.0}) {
        const UV p = planck_uv(t);
        const double up = p.u, vp = 1.5 * p.v;
        if (!f.inside(up, vp)) continue;
        o += fmt::format(R"(<line x1="{0:.1f}" y1="{1:.1f}" x2="{0:.1f}" y2="{2:.1f}" stroke="#000"/><text x="{0:.1f}" y="{3:.1f}" text-anchor="middle" font-size="9">{4:.0f} K</text>)",
                         f.px(up), f.py(vp) - 4, f.py(vp) + 4, f.py(vp) + 14, t);
    }
    auto pts = points;
    for (auto& s : pts) s.points = true;
    o += series_svg(f, pts);
    return o + "</svg>\n";
}

}  // namespace lampwright
