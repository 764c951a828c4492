// Tests of how numbers, tables, messages and charts are laid out for a person (issue 10, "Plots and
// text"): no "-0", no unit after "n/a", captions wrapped, one message prefix, each command's own
// help, and SVG charts whose legends, labels and markers do not hide one another. Geometry is
// checked on the parsed SVG with an approximate text width of 0.6 x font size per character.
#include "lampwright/colour/assessment.hpp"
#include "lampwright/colour/illuminants.hpp"
#include "lampwright/core/error.hpp"
#include "lampwright/core/format.hpp"
#include "lampwright/led/layer_design.hpp"
#include "lampwright/phosphor/excitation.hpp"
#include "lampwright/phosphor/phosphor.hpp"
#include "lampwright/phosphor/recipe.hpp"
#include "lampwright/production/lot_history.hpp"
#include "lampwright/production/qc.hpp"
#include "lampwright/report/assessment_report.hpp"
#include "lampwright/report/comparison_report.hpp"
#include "lampwright/report/history_report.hpp"
#include "lampwright/report/qc_report.hpp"
#include "lampwright/report/svg_plot.hpp"
#include "test_support.hpp"

#include <doctest/doctest.h>
#include <fmt/format.h>
#include <pugixml.hpp>

#include <algorithm>
#include <cmath>
#include <fstream>
#include <sstream>
#include <string>
#include <vector>

using namespace lampwright;

namespace {

struct Box {
    double x0 = 0, y0 = 0, x1 = 0, y1 = 0;
};
bool overlap(const Box& a, const Box& b) { return a.x0 < b.x1 && b.x0 < a.x1 && a.y0 < b.y1 && b.y0 < a.y1; }

// A <text>'s box: 0.6 x font size per character wide, one font size tall above the baseline.
Box text_box(const pugi::xml_node& t, double font_size = 11) {
    std::size_t chars = 0;
    for (unsigned char c : std::string(t.child_value())) chars += (c & 0xC0) != 0x80;
    const double w = 0.6 * font_size * static_cast<double>(chars);
    const double x = t.attribute("x").as_double(), y = t.attribute("y").as_double();
    const std::string anchor = t.attribute("text-anchor").as_string("start");
    const double x0 = anchor == "end" ? x - w : anchor == "middle" ? x - w / 2 : x;
    return {x0, y - font_size, x0 + w, y};
}
Box rect_box(const pugi::xml_node& r) {
    const double x = r.attribute("x").as_double(), y = r.attribute("y").as_double();
    return {x, y, x + r.attribute("width").as_double(), y + r.attribute("height").as_double()};
}

pugi::xml_document parse(const std::string& svg) {
    pugi::xml_document doc;
    const auto ok = doc.load_string(svg.c_str());
    REQUIRE_MESSAGE(ok, ok.description() << " at " << ok.offset);
    return doc;
}

// Every chart (an <svg> holding a plot-area rectangle) with a legend: each legend swatch and label
// lies wholly right of the plot area. Returns the number of legends checked.
int check_legends_outside(const pugi::xml_document& doc) {
    int legends = 0;
    for (const auto& x : doc.select_nodes("//svg[rect[@class='plot-area']]")) {
        const pugi::xml_node chart = x.node();
        const Box plot = rect_box(chart.select_node("rect[@class='plot-area']").node());
        for (const auto& g : chart.select_nodes("g[@class='legend']")) {
            ++legends;
            for (const auto& r : g.node().select_nodes(".//rect")) {
                const Box b = rect_box(r.node());
                CHECK_MESSAGE(b.x0 >= plot.x1, "legend swatch at x " << b.x0 << " inside the plot area ending at " << plot.x1);
            }
            for (const auto& t : g.node().select_nodes(".//text")) {
                const Box b = text_box(t.node());
                CHECK_MESSAGE(b.x0 >= plot.x1, "legend label '" << t.node().child_value() << "' inside the plot area");
                CHECK_MESSAGE(b.x1 <= chart.attribute("width").as_double() + 1, "legend label '" << t.node().child_value() << "' beyond the chart");
            }
        }
    }
    return legends;
}

ControlChart chart_of(std::size_t lots, const std::string& id_prefix) {
    ControlChart c;
    c.quantity = "mean Ra";
    for (std::size_t i = 0; i < lots; ++i) {
        c.lot_ids.push_back(fmt::format("{}{:02}", id_prefix, i + 1));
        c.values.push_back(80 + 0.3 * std::sin(static_cast<double>(i)));
    }
    c.centre = 80, c.lower = 79, c.upper = 81, c.average_moving_range = 0.3;
    return c;
}

ComparisonEntry entry_of(double temperature_K, const std::string& name) {
    ComparisonEntry e;
    e.name = name;
    e.kind = "spectrum";
    e.spectrum = planckian(temperature_K);
    e.assessment = assess(e.spectrum);
    return e;
}

const QcRun& demo_run() {
    static const QcRun run = run_qc(load_qc_spec(std::string(LAMPWRIGHT_SOURCE_DIR) + "/examples/qc/spec_F4100.toml"),
                                    {std::string(LAMPWRIGHT_SOURCE_DIR) + "/examples/qc/lot_A"}, 2);
    return run;
}

std::vector<std::string> lines_of(const std::string& s) {
    std::vector<std::string> out;
    std::istringstream in(s);
    for (std::string l; std::getline(in, l);) out.push_back(l);
    return out;
}
std::size_t columns(const std::string& s) {
    std::size_t n = 0;
    for (unsigned char c : s) n += (c & 0xC0) != 0x80;
    return n;
}

}  // namespace

// ---- numbers ----

TEST_CASE("format_fixed and format_signed: a value that rounds to zero has no minus sign") {
    CHECK(format_fixed(-0.00001, 4) == "0.0000");
    CHECK(format_fixed(-0.0, 2) == "0.00");
    CHECK(format_fixed(-0.4, 0) == "0");
    CHECK(format_fixed(-0.00051, 3) == "-0.001");
    CHECK(format_fixed(NAN, 2, "-") == "-");
    CHECK(format_signed(-0.00004, 4) == "0.0000");
    CHECK(format_signed(0.00004, 4) == "0.0000");
    CHECK(format_signed(0.0012, 4) == "+0.0012");
    CHECK(format_signed(-0.0012, 4) == "-0.0012");
}

TEST_CASE("svg axes: no tick label reads -0 (ticks at whole multiples of the step)") {
    SvgAxes a;
    // A running sum of the step from -0.6 reached -1.1e-16 at the zero tick ("-0.0").
    a.x_min = -0.7, a.x_max = 0.5, a.y_min = -0.7, a.y_max = 0.5;
    const auto doc = parse(svg_chart(a, {}));
    int zeros = 0;
    for (const auto& t : doc.select_nodes("//text")) {
        const std::string s = t.node().child_value();
        const bool minus_zero = s.rfind("-0", 0) == 0 && s.find_first_of("123456789") == std::string::npos;
        CHECK_MESSAGE(!minus_zero, "tick label '" << s << "'");
        zeros += s == "0.0";
    }
    CHECK(zeros == 2);  // the zero tick on each axis
}

TEST_CASE("assessment text: Duv that rounds to zero prints 0.0000, an undefined FWHM prints n/a with no unit") {
    Assessment a = assess(planckian(4000));
    a.cct.duv = -0.00001;
    a.features.fwhm_nm = NAN;
    const std::string t = assessment_text(a);
    CHECK(t.find("Duv 0.0000\n") != std::string::npos);
    CHECK(t.find("-0.0000") == std::string::npos);
    CHECK(t.find("FWHM n/a\n") != std::string::npos);
    CHECK(t.find("n/a nm") == std::string::npos);
    a.cct.duv = 0.0012;
    CHECK(assessment_text(a).find("Duv +0.0012\n") != std::string::npos);
}

TEST_CASE("a phosphor without a QE for the excitation names the data it has, without a stray space") {
    Phosphor p;
    p.id = "test-only-254";
    p.qe_254nm = 0.9;
    try {
        quantum_efficiency_for(p, Excitation::led(395, 12));
        FAIL("no error");
    } catch (const Error& e) {
        const std::string m = e.what();
        CHECK(m.find("(its data: 254 nm)") != std::string::npos);
    }
}

// ---- text layout ----

TEST_CASE("wrap_text: lines of at most the width, the first with its prefix, the rest indented") {
    const std::string text = "one two three four five six seven eight nine ten eleven twelve";
    const std::string w = wrap_text(text, 20, "  NOTE: ", "        ");
    for (const auto& l : lines_of(w)) CHECK(columns(l) <= 20);
    CHECK(w.rfind("  NOTE: one two", 0) == 0);
    CHECK(w.find("\n        ") != std::string::npos);
    CHECK(w.back() == '\n');
}

TEST_CASE("layer text: the leak caution is wrapped at 100 columns") {
    // The 80 um example layer leaks enough 395 nm light to need the caution.
    const auto r = lwtest::run_cli_args({"layer", std::string(LAMPWRIGHT_SOURCE_DIR) + "/examples/layers/module395_80um.toml"});
    REQUIRE(r.exit_code == 0);
    REQUIRE(r.out.find("CAUTION:") != std::string::npos);
    for (const auto& l : lines_of(r.out)) CHECK_MESSAGE(columns(l) <= 100, l);
    for (const auto& l : lines_of(lwtest::run_cli_args({"--help"}).out)) CHECK_MESSAGE(columns(l) <= 100, l);
}

// ---- messages ----

TEST_CASE("messages on stderr: one prefix, lampwright: error|warning|note") {
    const lwtest::TempDir dir("lampwright_text");
    const std::string db = dir.file("h.db");
    const auto r = lwtest::run_cli_args({"qc", std::string(LAMPWRIGHT_SOURCE_DIR) + "/examples/qc/spec_F4100.toml",
                                         std::string(LAMPWRIGHT_SOURCE_DIR) + "/examples/qc/lot_A", "--db", db, "--format", "csv"});
    CHECK(r.err.find("lampwright qc:") == std::string::npos);
    CHECK(r.err.find("lampwright: note: lot ") != std::string::npos);
    const auto again = lwtest::run_cli_args({"qc", std::string(LAMPWRIGHT_SOURCE_DIR) + "/examples/qc/spec_F4100.toml",
                                             std::string(LAMPWRIGHT_SOURCE_DIR) + "/examples/qc/lot_A", "--db", db, "--format", "csv"});
    CHECK(again.err.find("lampwright: warning: every lamp is already recorded") != std::string::npos);
    const auto layer = lwtest::run_cli_args({"layer", std::string(LAMPWRIGHT_SOURCE_DIR) + "/examples/layers/module395_80um.toml", "--format", "json"});
    CHECK(layer.err.find("lampwright: warning: CAUTION: ") != std::string::npos);
    for (const auto& l : lines_of(r.err + again.err + layer.err)) CHECK_MESSAGE(l.rfind("lampwright: ", 0) == 0, l);
}

TEST_CASE("help COMMAND prints that command's own help; help of an unknown command exits 2 naming it") {
    for (const char* command : {"assess", "qc"}) {
        CAPTURE(command);
        const auto help = lwtest::run_cli_args({"help", command});
        const auto own = lwtest::run_cli_args({command, "--help"});
        CHECK(help.exit_code == 0);
        CHECK(own.exit_code == 0);
        CHECK(help.out == own.out);
        CHECK(help.out.find("Usage: lampwright COMMAND") == std::string::npos);  // not the general help
        CHECK(help.out.find(std::string("Usage: lampwright ") + command) == 0);
    }
    const auto unknown = lwtest::run_cli_args({"help", "nosuchcommand"});
    CHECK(unknown.exit_code == 2);
    CHECK(unknown.err.find("nosuchcommand") != std::string::npos);
}

// ---- charts ----

TEST_CASE("svg legend: a chart's legend lies right of its plot area") {
    SvgAxes a;
    a.x_min = 0, a.x_max = 10, a.y_min = 0, a.y_max = 1;
    const std::vector<SvgSeries> series{{"a long series label that would cover the data", {0, 10}, {0.9, 0.9}, "", false},
                                        {"second", {0, 10}, {0.1, 0.8}, "", false}};
    CHECK(check_legends_outside(parse(svg_chart(a, series))) == 1);
}

TEST_CASE("compare svg: the spectra and u'v' panels have their legends outside the plot areas") {
    const std::vector<ComparisonEntry> entries{entry_of(3000, "warm lamp with a long descriptive name"), entry_of(4000, "neutral"),
                                               entry_of(6500, "daylight-ish")};
    const auto doc = parse(comparison_svg(entries));
    CHECK(check_legends_outside(doc) == 2);
}

TEST_CASE("history svg: legends outside the plot area; lot ids label the x axis, thinned so none overlap") {
    {
        const auto doc = parse(control_charts_svg({chart_of(5, "lot-A")}));
        CHECK(check_legends_outside(doc) == 1);
        std::vector<std::string> labels;
        for (const auto& t : doc.select_nodes("//text[@class='x-tick-label']")) labels.push_back(t.node().child_value());
        CHECK(labels == std::vector<std::string>{"lot-A01", "lot-A02", "lot-A03", "lot-A04", "lot-A05"});
    }
    {
        const auto doc = parse(control_charts_svg({chart_of(60, "lot-20261203T1200-")}));
        std::vector<Box> boxes;
        std::vector<std::string> labels;
        for (const auto& t : doc.select_nodes("//text[@class='x-tick-label']")) {
            boxes.push_back(text_box(t.node()));
            labels.push_back(t.node().child_value());
        }
        REQUIRE(labels.size() >= 2);
        CHECK(labels.size() < 60);
        CHECK(labels.front() == "lot-20261203T1200-01");
        for (std::size_t i = 1; i < boxes.size(); ++i) CHECK_MESSAGE(!overlap(boxes[i - 1], boxes[i]), labels[i - 1] << " overlaps " << labels[i]);
    }
}

TEST_CASE("svg labels: two labels at one place do not overprint (histogram 'mean' and 'min')") {
    // The histogram case: the mean (78.9) just left of the spec minimum (80), both labelled at the top.
    SvgAxes a;
    a.x_min = 70, a.x_max = 90, a.y_min = 0, a.y_max = 10;
    SvgOverlay ov;
    ov.texts.push_back({78.9, 10, "mean 78.9", "start", "#555", 3, 12});
    ov.texts.push_back({80, 10, "min 80", "end", "#d62728", -3, 12});
    const auto doc = parse(svg_chart(a, {}, ov));
    std::vector<Box> boxes;
    for (const auto& t : doc.select_nodes("//text[@fill]")) boxes.push_back(text_box(t.node()));
    REQUIRE(boxes.size() == 2);  // both kept (the second moved down a line)
    CHECK(!overlap(boxes[0], boxes[1]));
}

TEST_CASE("qc report: in the u'v' diagram the target cross is drawn last, over the lamps; the legend is outside the plot area") {
    const std::string html = qc_html_report(demo_run());
    pugi::xml_document doc;
    REQUIRE(doc.load_string(html.c_str(), pugi::parse_default | pugi::parse_doctype));
    const pugi::xml_node cross = doc.select_node("//*[@id='target-centre']").node();
    REQUIRE(cross);
    CHECK(!cross.next_sibling());  // nothing drawn after it in the plot area
    CHECK(cross.parent().select_nodes(".//*[contains(@class, 'lamp')]").size() == demo_run().lamps.size());
    // The legend column: right of the plot area.
    const pugi::xml_node diagram = doc.select_node("//*[@id='uv-diagram']").node();
    const Box plot = rect_box(diagram.select_node("rect[@class='plot-area']").node());
    const pugi::xml_node legend = diagram.select_node("g[@class='legend']").node();
    REQUIRE(legend);
    for (const auto& r : legend.select_nodes(".//rect")) CHECK(rect_box(r.node()).x0 >= plot.x1);
    for (const auto& t : legend.select_nodes(".//text")) CHECK(text_box(t.node()).x0 >= plot.x1);
}

TEST_CASE("qc report: the histogram labels do not overlap") {
    const std::string html = qc_html_report(demo_run());
    pugi::xml_document doc;
    REQUIRE(doc.load_string(html.c_str(), pugi::parse_default | pugi::parse_doctype));
    for (const char* id : {"hist-ra", "hist-r9"}) {
        CAPTURE(id);
        std::vector<Box> boxes;
        std::vector<std::string> labels;
        for (const auto& t : doc.select_nodes((std::string("//*[@id='") + id + "']/svg//text").c_str())) {
            boxes.push_back(text_box(t.node()));
            labels.push_back(t.node().child_value());
        }
        CHECK(!boxes.empty());
        for (std::size_t i = 0; i < boxes.size(); ++i)
            for (std::size_t j = i + 1; j < boxes.size(); ++j) CHECK_MESSAGE(!overlap(boxes[i], boxes[j]), labels[i] << " overlaps " << labels[j]);
    }
}

TEST_CASE("text tables: each header ends where its column's values end (fit and compare)") {
    // Right-aligned numeric columns: the last character of a header word and of each value below it
    // share a column.
    auto right_edges = [](const std::string& line) {
        std::vector<std::size_t> e;
        for (std::size_t i = 0; i < line.size(); ++i)
            if (line[i] != ' ' && (i + 1 == line.size() || line[i + 1] == ' ')) e.push_back(i);
        return e;
    };
    const auto fit = lwtest::run_cli_args({"fit", lwtest::example_recipe("triband_4000K.toml"), "--cct", "3500", "--maximize", "ra"});
    REQUIRE(fit.exit_code == 0);
    const auto lines = lines_of(fit.out);
    std::size_t h = 0;
    while (h < lines.size() && lines[h].find("  component") != 0) ++h;
    REQUIRE(h + 3 < lines.size());
    const auto head = right_edges(lines[h]);
    REQUIRE(head.size() == 3);  // component, start, fitted
    for (std::size_t r = h + 1; r <= h + 3; ++r) {
        const auto e = right_edges(lines[r]);
        REQUIRE(e.size() >= 2);
        CHECK_MESSAGE(e[e.size() - 2] == head[1], lines[h] << "\n" << lines[r]);
        CHECK_MESSAGE(e.back() == head[2], lines[h] << "\n" << lines[r]);
    }
    // compare: Duv signed like every other Duv in text (+0.0004, not 0.0004).
    const auto cmp = lwtest::run_cli_args({"compare", std::string(LAMPWRIGHT_SOURCE_DIR) + "/examples/layers/module395_150um.toml"});
    REQUIRE(cmp.exit_code == 0);
    const auto cl = lines_of(cmp.out);
    REQUIRE(cl.size() >= 2);
    // The Duv cell (9th from the right: Duv Ra R9 Rf Rg LER eff leak% lm/W*; Rf and Rg added for
    // issue 13) carries its sign, whatever this example's value is.
    {
        std::istringstream row(cl[1]);
        std::vector<std::string> cells;
        for (std::string w; row >> w;) cells.push_back(w);
        REQUIRE(cells.size() >= 9);
        const std::string duv = cells[cells.size() - 9];
        // A Duv that rounds to zero is written 0.0000, unsigned (format_signed, tested above); the
        // refitted example lands there.
        CHECK_MESSAGE(((duv.size() == 7 && (duv[0] == '+' || duv[0] == '-')) || duv == "0.0000"), "Duv cell '" << duv << "'");
    }
    const auto ch = right_edges(cl[0]);
    for (std::size_t e : right_edges(cl[1]))
        if (e > 45) CHECK_MESSAGE(std::find(ch.begin(), ch.end(), e) != ch.end(), "value ending at column " << e << "\n" << cl[0] << "\n" << cl[1]);
}

TEST_CASE("layer fit text: constraints with fixed decimals per quantity, never an exponent") {
    const auto r = lwtest::run_cli_args({"fit", std::string(LAMPWRIGHT_SOURCE_DIR) + "/examples/layers/module395_80um.toml", "--cct", "4000", "--fit-thickness"});
    REQUIRE(r.exit_code == 0);
    bool delta = false;
    for (const auto& l : lines_of(r.out)) {
        if (l.find("    ok ") != 0 && l.find("    FAILED ") != 0) continue;
        CHECK_MESSAGE(l.find("e-0") == std::string::npos, l);
        const auto p = l.find("delta u'v' from the target ");
        if (p != std::string::npos) {
            delta = true;
            const std::string v = l.substr(p + 27, l.find(',', p) - p - 27);
            CHECK_MESSAGE(v.size() == 7, l);  // 0.00049: five decimals, as in the blend fit
        }
    }
    CHECK(delta);
}

// ---- shared component tables (phosphor/component_table.hpp) ----

TEST_CASE("recipe and layer design: the shared [[component]] checks give the same problem at the same line") {
    const lwtest::TempDir dir("lampwright_components");
    auto problem_of = [&](const std::string& name, const std::string& text, bool layer) {
        const std::string path = dir.file(name);
        std::ofstream(path) << text;
        try {
            if (layer) (void)load_layer_design(path);
            else (void)load_recipe(path);
        } catch (const InputError& e) {
            const std::string w = e.what();
            return std::to_string(e.line()) + ": " + w.substr(w.find(path) + path.size());
        }
        return std::string("no error");
    };
    // Same line numbers in both: the head is two lines in each.
    const std::string recipe_head = "name = 'r'\nexcitation_nm = 253.7\n", layer_head = "name = 'l'\n[pump]\npeak_nm = 395\nfwhm_nm = 12\n[layer]\nthickness_um = 150\n";
    const std::string both = "[[component]]\nphosphor = 'BAM'\nspectrum = 'x.csv'\n";
    const std::string percent = "[[component]]\nphosphor = 'BAM'\nquantum_efficiency = 90\n";
    const std::string unknown = "[[component]]\nphosphor = 'no-such-phosphor'\n";
    for (const auto& [what, body] : std::vector<std::pair<std::string, std::string>>{{"both", both}, {"percent", percent}, {"unknown", unknown}}) {
        CAPTURE(what);
        const std::string r = problem_of("r.toml", recipe_head + body + "mass_fraction = 1\n", false);
        const std::string l = problem_of("l.toml", layer_head + body + "loading = 0.1\n", true);
        CHECK(r != "no error");
        // The layer's head is four lines longer.
        CHECK(std::stoi(l) == std::stoi(r) + 4);
        CHECK(r.substr(r.find("'component")) == l.substr(l.find("'component")));
    }
    CHECK(problem_of("r0.toml", recipe_head, false).find("no [[component]] given") != std::string::npos);
    CHECK(problem_of("l0.toml", layer_head, true).find("no [[component]] given") != std::string::npos);
}
