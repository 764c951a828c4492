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
    // Text tick labels on the x axis instead of numbers (e.g. lot ids at x = 1, 2, ...); thinned to
    // every k-th so that no two labels overlap.
    std::vector<std::pair<double, std::string>> x_tick_labels{};
};

// One chart as an <svg> element (embeddable in HTML, or a file on its own).
std::string svg_chart(const SvgAxes& axes, const std::vector<SvgSeries>& series);

// The u'v' diagram: spectrum locus, Planckian locus with CCT ticks, and the series as points.
// The window is [u_min, u_max] x [v_min, v_max].
std::string svg_uv_diagram(const std::string& title, const std::vector<SvgSeries>& points, double u_min, double u_max,
                           double v_min, double v_max, int width = 520, int height = 520);

// Extra drawing for a chart, in the chart's data coordinates (u', v' for the u'v' diagram), clipped
// to the plot area: filled regions and reference lines under the series, single markers over them.
struct SvgPolygon {
    std::vector<double> x, y;
    bool closed = true;              // <polygon>; false draws an open <polyline>
    std::string id, css_class;       // attributes, written when not empty
    std::string stroke = "#333", fill = "none";
    double stroke_width = 1.0, fill_opacity = 1.0;
    std::string dash;                // stroke-dasharray, e.g. "4 3"
    std::string title;               // tooltip (<title>)
};
struct SvgMarker {
    double x = 0, y = 0;
    enum class Shape { circle, ring, diamond, plus } shape = Shape::circle;
    double size = 3.5;               // radius in pixels
    std::string id, css_class, colour = "#000", title;
};
struct SvgText {
    double x = 0, y = 0;             // data coordinates
    std::string text, anchor = "start", colour = "#000";
    double dx = 0, dy = 0;           // offset in pixels
};
struct SvgOverlay {
    std::string id, css_class;       // attributes of the <svg> element
    std::vector<SvgPolygon> polygons;
    std::vector<SvgMarker> markers;
    std::vector<SvgText> texts;
    std::string pixel_svg;           // raw SVG in pixel coordinates, drawn last (legends)
    int legend_width = 0;            // pixels kept free right of the plot area for a legend in pixel_svg
};

// The same charts with an overlay.
std::string svg_chart(const SvgAxes& axes, const std::vector<SvgSeries>& series, const SvgOverlay& overlay);
std::string svg_uv_diagram(const std::string& title, const std::vector<SvgSeries>& points, double u_min, double u_max,
                           double v_min, double v_max, int width, int height, const SvgOverlay& overlay);
// The plot area of a chart of the given size, in pixels (for placing pixel_svg), with
// `legend_width` pixels kept free on its right (SvgOverlay::legend_width). Legends are drawn there,
// outside the plot area, so they never hide data; series labels get such a column of their own.
struct SvgPlotArea {
    int left = 0, top = 0, right = 0, bottom = 0;
};
SvgPlotArea svg_plot_area(int width, int height, int legend_width = 0);
// A window of equal scales in x and y centred on (x, y), `half` data units from the centre to the
// nearer edges of a chart of the given size (the u'v' diagrams of qc and serve, zoomed on a target).
struct SvgWindow {
    double x_min = 0, x_max = 1, y_min = 0, y_max = 1;
    double per_pixel = 0;  // data units per pixel
};
SvgWindow svg_square_window(double x, double y, double half, int width, int height, int legend_width = 0);
// The width of the legend column that the labelled series need (0 when none is labelled): a chart
// keeps its plot area when it is made this much wider.
int svg_legend_width(const std::vector<SvgSeries>& series);
// Approximate width in pixels of a text line at a font size (0.6 em per character; sans-serif
// averages about 0.5-0.6 em, common practice, no source): used to keep labels apart.
double svg_text_width(const std::string& text, double font_size);

// Distinct colours for series i = 0, 1, ...
std::string series_colour(std::size_t i);
// Text escaped for XML.
std::string xml_escape(const std::string& s);

}  // namespace lampwright
