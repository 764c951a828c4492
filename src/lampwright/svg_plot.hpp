#pragma once
// Small self-contained SVG charts (no scripts, no external resources): line plots and the
// CIE 1976 u'v' diagram with the Planckian locus. Used by compare, the optimiser's trade-off
// front and QC reports.
#include <string>
#include <vector>

namespace lampwright {

struct SvgSeries {
    std::string label;
    std::vector<double> x, y;
    std::string colour;         // CSS colour
    bool points = false;        // markers instead of a line
};

struct SvgAxes {
    std::string title, x_label, y_label;
    double x_min = 0, x_max = 1, y_min = 0, y_max = 1;
    int width = 640, height = 420;
};

// One chart as an <svg> element (embeddable in HTML, or a file on its own).
std::string svg_chart(const SvgAxes& axes, const std::vector<SvgSeries>& series);

// The u'v' diagram: spectrum locus, Planckian locus with CCT ticks, and the series as points.
// The window is [u_min, u_max] x [v_min, v_max].
std::string svg_uv_diagram(const std::string& title, const std::vector<SvgSeries>& points, double u_min, double u_max,
                           double v_min, double v_max, int width = 520, int height = 520);

// Distinct colours for series i = 0, 1, ...
std::string series_colour(std::size_t i);
// Text escaped for XML.
std::string xml_escape(const std::string& s);

}  // namespace lampwright
