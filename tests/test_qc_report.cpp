// Tests of the QC reports (src/lampwright/report/qc_report.hpp): the HTML report parses as XML and holds
// the expected elements, the JSON and text summaries, CSV columns, and the tolerance region's
// boundary. The demo lot is examples/qc/lot_A with examples/qc/spec_F4100.toml (invented data
// made by tools/make_demo_lot.py: 40 tubes, lamps 37 and 40 with a deliberate weighing slip).
//
// Set LAMPWRIGHT_REPORT_OUT=/some/file.html to keep the demo report (tools/screenshot_report.sh
// renders it to PNG).
#include "lampwright/colour/colorimetry.hpp"
#include "lampwright/colour/illuminants.hpp"
#include "lampwright/production/qc.hpp"
#include "lampwright/phosphor/recipe.hpp"
#include "lampwright/production/lot_diagnosis.hpp"
#include "lampwright/report/drift_report.hpp"
#include "lampwright/report/qc_report.hpp"
#include "lampwright/report/svg_plot.hpp"
#include "lampwright/design/targets.hpp"

#include <doctest/doctest.h>
#include <fmt/format.h>
#include <nlohmann/json.hpp>
#include <pugixml.hpp>

#include <algorithm>
#include <cmath>
#include <cstdlib>
#include <fstream>
#include <set>
#include <string>
#include <vector>

using namespace lampwright;

namespace {

const std::string kExamples = std::string(LAMPWRIGHT_SOURCE_DIR) + "/examples/qc";

const QcRun& demo_run() {
    static const QcRun run = run_qc(load_qc_spec(kExamples + "/spec_F4100.toml"), {kExamples + "/lot_A"}, 2);
    return run;
}

std::size_t count_xpath(const pugi::xml_node& root, const std::string& xpath) { return root.select_nodes(xpath.c_str()).size(); }

// Elements whose class attribute holds the token.
std::string has_class(const std::string& token) { return "contains(concat(' ', normalize-space(@class), ' '), ' " + token + " ')"; }

// The report without its namespace declarations (the only URLs it may hold).
std::string without_xmlns(std::string html) {
    for (const std::string ns : {R"( xmlns="http://www.w3.org/1999/xhtml")", R"( xmlns="http://www.w3.org/2000/svg")"}) {
        for (auto p = html.find(ns); p != std::string::npos; p = html.find(ns)) html.erase(p, ns.size());
    }
    return html;
}

void check_self_contained(const std::string& html) {
    // Self-contained, no network (the issue's report requirement): no URL beyond the xmlns
    // attributes, no scripts, no external resources (common practice, no source).
    const std::string rest = without_xmlns(html);
    CHECK(rest.find("http") == std::string::npos);
    CHECK(rest.find("<script") == std::string::npos);
    CHECK(rest.find("href") == std::string::npos);
    CHECK(rest.find("src=") == std::string::npos);
    CHECK(rest.find("url(") == std::string::npos);
    CHECK(rest.find("@import") == std::string::npos);
}

// A lamp judged from a Planckian spectrum (synthetic, no file).
LampResult planck_lamp(const QcSpec& spec, double temperature_K, const std::string& name) {
    Assessment a = assess(planckian(temperature_K));
    a.name = name;
    LampResult l = judge_lamp(spec, a);
    l.file = name + ".csv";
    return l;
}

}  // namespace

TEST_CASE("qc report: the demo lot's HTML parses as XML and holds every element") {
    const QcRun& run = demo_run();
    // The demo lot (tools/make_demo_lot.py): 40 files, none bad; the two weighing slips (lamps 37
    // and 40, 5.7 and 8 steps) fail, and so does the marginal lamp_20 (4.06 steps, not checked by
    // name: it sits on the limit); most lamps pass.
    REQUIRE(run.lamps.size() == 40);
    CHECK(run.bad_files.empty());
    CHECK(run.stats.passed >= 34);
    CHECK(run.stats.passed <= 38);
    for (const auto& l : run.lamps)
        if (l.name == "lamp_37" || l.name == "lamp_40") CHECK_MESSAGE(!l.pass(), l.name);

    const std::string html = qc_html_report(run);
    if (const char* out = std::getenv("LAMPWRIGHT_REPORT_OUT")) std::ofstream(out) << html;
    // XML well-formedness, checked by pugixml (common practice, no source: XHTML-compatible HTML5).
    pugi::xml_document doc;
    const pugi::xml_parse_result parsed = doc.load_string(html.c_str(), pugi::parse_default | pugi::parse_doctype);
    REQUIRE_MESSAGE(parsed, parsed.description() << " at offset " << parsed.offset);
    CHECK(std::string(doc.document_element().name()) == "html");
    CHECK(html.rfind("<!DOCTYPE html>", 0) == 0);

    // Element ids and classes the report promises (src/lampwright/report/qc_report.hpp).
    const pugi::xml_node root = doc.document_element();
    for (const char* id : {"uv-diagram", "tolerance-region", "centroid", "hist-ra", "hist-r9", "lamp-table", "lot-statistics"}) {
        CAPTURE(id);
        CHECK(count_xpath(root, std::string("//*[@id='") + id + "']") == 1);
    }
    CHECK(std::string(root.select_node("//*[@id='uv-diagram']").node().name()) == "svg");
    CHECK(std::string(root.select_node("//*[@id='hist-ra']").node().name()) == "svg");
    CHECK(std::string(root.select_node("//*[@id='hist-r9']").node().name()) == "svg");
    CHECK(count_xpath(root, "//*[@id='uv-diagram']//*[@id='tolerance-region']") == 1);
    CHECK(count_xpath(root, "//*[@id='uv-diagram']//*[@id='centroid']") == 1);
    // One point per lamp, coloured by its verdict.
    const std::size_t failed = run.stats.count - run.stats.passed;
    CHECK(count_xpath(root, "//*[@id='uv-diagram']//*[" + has_class("lamp") + "]") == run.lamps.size());
    CHECK(count_xpath(root, "//*[@id='uv-diagram']//*[" + has_class("lamp") + " and " + has_class("pass") + "]") == run.stats.passed);
    CHECK(count_xpath(root, "//*[@id='uv-diagram']//*[" + has_class("lamp") + " and " + has_class("fail") + "]") == failed);
    CHECK(count_xpath(root, "//*[@id='uv-diagram']//*[" + has_class("lamp") + " and " + has_class("pass") + " and @fill='#2ca02c']") == run.stats.passed);
    CHECK(count_xpath(root, "//*[@id='uv-diagram']//*[" + has_class("lamp") + " and " + has_class("fail") + " and @fill='#d62728']") == failed);
    // The Planckian locus with CCT ticks; the ellipse's boundary as a polygon of many points.
    CHECK(count_xpath(root, "//*[@id='uv-diagram']//*[" + has_class("planckian-locus") + "]/*") >= 1);
    CHECK(count_xpath(root, "//*[@id='uv-diagram']//*[" + has_class("cct-ticks") + "]/*[local-name()='text']") >= 3);
    const std::string region_points = root.select_node("//*[@id='tolerance-region']").node().attribute("points").value();
    CHECK(std::count(region_points.begin(), region_points.end(), ',') >= 100);
    // Histograms: bars and the spec minimum; every lamp in a bar.
    for (const char* id : {"hist-ra", "hist-r9"}) {
        CAPTURE(id);
        const std::string h = std::string("//*[@id='") + id + "']";
        CHECK(count_xpath(root, h + "//*[" + has_class("spec-limit") + "]") == 1);
        CHECK(count_xpath(root, h + "//*[" + has_class("bar") + "]") >= 2);
    }
    // A bar is marked below the limit when its lamps fall below the Ra minimum: as many such bars
    // as there are lamps below it, at most (one bar may hold several), and none when no lamp is.
    std::size_t below = 0;
    for (const auto& l : run.lamps)
        if (l.assessment.rendering && l.assessment.rendering->ra < *run.spec.ra_min) ++below;
    const std::size_t marked = count_xpath(root, "//*[@id='hist-ra']//*[" + has_class("below-limit") + "]");
    CHECK(marked <= below);
    CHECK((marked > 0) == (below > 0));
    {
        // With the minimum at the lot's mean Ra, about half the lamps fall below it: bars marked.
        QcRun high = run;
        double sum = 0;
        for (const auto& l : run.lamps) sum += l.assessment.rendering->ra;
        high.spec.ra_min = sum / static_cast<double>(run.lamps.size());
        pugi::xml_document d2;
        REQUIRE(d2.load_string(qc_html_report(high).c_str(), pugi::parse_default | pugi::parse_doctype));
        CHECK(count_xpath(d2.document_element(), "//*[@id='hist-ra']//*[" + has_class("below-limit") + "]") >= 1);
    }
    // Table: one row per lamp, failing rows marked.
    CHECK(count_xpath(root, "//*[@id='lamp-table']/tbody/tr") == run.lamps.size());
    CHECK(count_xpath(root, "//*[@id='lamp-table']/tbody/tr[" + has_class("fail") + "]") == failed);
    CHECK(count_xpath(root, "//*[@id='lot-statistics']/tbody/tr") == run.stats.summaries.size());
    // CIE 224 / TM-30-20: the colour vector graphic of the lot's centroid spectrum, with the
    // figures of that spectrum in its corner, and Rf and Rg histograms holding every lamp.
    REQUIRE(run.centroid);
    REQUIRE(run.centroid->fidelity);
    for (const char* id : {"cvg-centroid", "hist-rf", "hist-rg"}) {
        CAPTURE(id);
        REQUIRE(count_xpath(root, std::string("//*[@id='") + id + "']") == 1);
        CHECK(std::string(root.select_node((std::string("//*[@id='") + id + "']").c_str()).node().name()) == "svg");
    }
    const std::string cvg = "//*[@id='cvg-centroid']";
    // One arrow (a line and, when long enough, a head) per bin with samples (all 16 here), the dashed reference circle.
    CHECK(count_xpath(root, cvg + "//*[local-name()='line' and @stroke='#1f5f8b']") == 16);
    CHECK(count_xpath(root, cvg + "//*[local-name()='circle' and @stroke-dasharray]") == 1);
    const std::string corner = fmt::format("Rf {:.0f}", run.centroid->fidelity->rf), corner_g = fmt::format("Rg {:.0f}", run.centroid->fidelity->rg);
    bool rf_shown = false, rg_shown = false;
    for (const auto& t : root.select_nodes((cvg + "//*[local-name()='text']").c_str())) {
        rf_shown |= std::string(t.node().text().get()) == corner;
        rg_shown |= std::string(t.node().text().get()) == corner_g;
    }
    CHECK(rf_shown);
    CHECK(rg_shown);
    // The centroid is a mean of near-identical tubes: its Rf lies within the lamps' range.
    double rf_lo = 1e9, rf_hi = -1e9;
    for (const auto& l : run.lamps) rf_lo = std::min(rf_lo, l.assessment.fidelity->rf), rf_hi = std::max(rf_hi, l.assessment.fidelity->rf);
    CHECK(run.centroid->fidelity->rf >= rf_lo - 0.1);
    CHECK(run.centroid->fidelity->rf <= rf_hi + 0.1);
    for (const char* id : {"hist-rf", "hist-rg"}) {
        CAPTURE(id);
        const std::string h = std::string("//*[@id='") + id + "']";
        CHECK(count_xpath(root, h + "//*[" + has_class("bar") + "]") >= 1);
        CHECK(count_xpath(root, h + "//*[" + has_class("spec-limit") + "]") == 0);  // the demo spec has no Rf/Rg limits
        int lamps = 0;  // every lamp in a bar: the bars' titles end "N lamps"
        for (const auto& b : root.select_nodes((h + "//*[" + has_class("bar") + "]/*[local-name()='title']").c_str())) {
            const std::string t = b.node().text().get();
            lamps += std::stoi(t.substr(t.rfind(": ") + 2));
        }
        CHECK(lamps == 40);
    }
    check_self_contained(html);
    // The usual cautions (README, Cautions).
    for (const char* word : {"mercury", "dust", "UV", "mains", "local codes"}) CHECK(html.find(word) != std::string::npos);
}

TEST_CASE("qc report: JSON holds the count, pass rate, lamps and statistics") {
    const QcRun& run = demo_run();
    const auto j = nlohmann::json::parse(qc_json(run).dump());
    CHECK(j.at("count") == 40);
    CHECK(j.at("passed") == run.stats.passed);
    // pass rate = passed / count (definition).
    CHECK(j.at("pass_rate").get<double>() == doctest::Approx(static_cast<double>(run.stats.passed) / 40.0));
    REQUIRE(j.at("lamps").size() == 40);
    for (const auto& l : j.at("lamps")) {
        CHECK(l.contains("steps"));
        CHECK(l.at("pass").get<bool>() == l.at("failures").empty());
    }
    CHECK(j.at("statistics").at("centroid").contains("steps"));
    CHECK(j.at("statistics").at("capability").size() == run.stats.capabilities.size());
    CHECK(j.at("bad_files").empty());
    CHECK(j.at("spec").at("region") == "ellipse");
    // Rf and Rg in every lamp object and in the lot summaries, the mean of the lamps' values
    // (arithmetic mean, definition); the spec's TM-30 limits, null when the spec has none
    // (docs/output-schemas.md).
    double rf_sum = 0;
    for (const auto& l : j.at("lamps")) rf_sum += l.at("Rf").get<double>();
    bool rf_summary = false, rg_summary = false;
    for (const auto& q : j.at("statistics").at("summaries")) {
        if (q.at("quantity") == "Rf") {
            rf_summary = true;
            CHECK(std::abs(q.at("mean").get<double>() - rf_sum / 40.0) < 0.005);  // the lamps' JSON Rf has 2 decimals
        }
        if (q.at("quantity") == "Rg") rg_summary = q.at("sd").is_number();
    }
    CHECK(rf_summary);
    CHECK(rg_summary);
    const auto& limits = j.at("spec").at("limits");
    CHECK(limits.at("min_rf").is_null());
    CHECK(limits.at("max_rg").is_null());
    REQUIRE(limits.at("hue_bins").size() == 16);
    CHECK(limits.at("hue_bins")[15].at("bin") == 16);
    CHECK(limits.at("hue_bins")[15].at("max_rcs").is_null());
}

TEST_CASE("qc report: text shows each lamp's Rf and Rg and the TM-30 limits; JSON gives the per-bin limits") {
    QcRun run = demo_run();
    run.spec.rf_min = 70;
    run.spec.rcs_h_min_percent[0] = -12.5;
    run.spec.rcs_h_max_percent[0] = 7;
    const std::string t = qc_text(run);
    // The lamp table's header names Rf and Rg after R9; the limits line lists the new limits.
    CHECK(t.find("R9     Rf     Rg  steps") != std::string::npos);
    CHECK(t.find("Rf ≥ 70") != std::string::npos);
    CHECK(t.find("Rcs,h1 -12.5 to 7 %") != std::string::npos);
    const auto& l0 = run.lamps.front();
    CHECK(t.find(fmt::format("{:.1f}", l0.assessment.fidelity->rg)) != std::string::npos);
    const auto j = nlohmann::json::parse(qc_json(run).dump());
    const auto& b1 = j.at("spec").at("limits").at("hue_bins")[0];
    CHECK(b1.at("min_rcs") == -12.5);  // the values set above
    CHECK(b1.at("max_rcs") == 7);
    CHECK(b1.at("min_rf").is_null());
    CHECK(j.at("spec").at("limits").at("min_rf") == 70);
    // The HTML histograms mark the spec's Rf minimum and both Rg limits.
    run.spec.rg_min = 90;
    run.spec.rg_max = 110;
    pugi::xml_document doc;
    const std::string html = qc_html_report(run);
    REQUIRE(doc.load_string(html.c_str(), pugi::parse_default | pugi::parse_doctype));
    CHECK(count_xpath(doc.document_element(), "//*[@id='hist-rf']//*[" + has_class("spec-limit") + "]") == 1);
    CHECK(count_xpath(doc.document_element(), "//*[@id='hist-rg']//*[" + has_class("spec-limit") + "]") == 2);
}

TEST_CASE("qc report: tolerance region of an n-step ellipse lies n steps from the centre") {
    // MacAdam 1942 (as in shared/standards-facts.md): the n-step contour is
    // g11 dx^2 + 2 g12 dx dy + g22 dy^2 = n^2, so every boundary point, back in x, y, is n steps.
    QcSpec spec;
    spec.region = QcSpec::Region::ellipse;
    std::vector<MacAdamEllipse> ellipses{ansi_c78376_colour("F4100").ellipse, ansi_c78376_colour("F2700").ellipse,
                                         macadam_ellipse({0.31, 0.33}, 0.004, 0.001, -30.0), macadam_ellipse({0.45, 0.41}, 0.002, 0.002, 0.0)};
    for (const auto& e : ellipses) {
        for (double n : {1.0, 2.5, 4.0, 7.0}) {
            CAPTURE(e.centre.x);
            CAPTURE(n);
            spec.step_ellipse = e;
            spec.centre = e.centre;
            spec.max_steps = n;
            const auto boundary = tolerance_region_uv(spec, 90);
            REQUIRE(boundary.size() == 91);
            CHECK(boundary.front().u == boundary.back().u);  // closed
            CHECK(boundary.front().v == boundary.back().v);
            double worst = 0;
            for (const auto& p : boundary) worst = std::max(worst, std::abs(macadam_steps(e, xy_from_uv_1976(p)) - n));
            CHECK(worst < 1e-9);
        }
    }
}

TEST_CASE("qc report: tolerance region of a u'v' circle and of an ANSI quadrangle") {
    QcSpec circle;
    circle.region = QcSpec::Region::circle;
    circle.centre = {0.38, 0.377};
    circle.max_duv_prime = 0.004;
    const UV c = uv_1976_from_xy(circle.centre);
    for (const auto& p : tolerance_region_uv(circle)) CHECK(std::hypot(p.u - c.u, p.v - c.v) == doctest::Approx(0.004).epsilon(1e-12));  // definition

    QcSpec quad;
    quad.region = QcSpec::Region::ansi_quadrangle;
    quad.ansi_class = ansi_c78377_class(4000);
    const auto b = tolerance_region_uv(quad, 80);
    REQUIRE(b.size() == 81);
    // The sides start at the corners (targets.hpp, ANSI C78.377-2017 Table 1 with Duv +-0.006).
    const auto corners = ansi_c78377_quadrangle(*quad.ansi_class);
    for (int k = 0; k < 4; ++k) {
        const UV q = uv_1976_from_xy(corners[k]);
        CHECK(b[static_cast<std::size_t>(20 * k)].u == doctest::Approx(q.u).epsilon(1e-12));
        CHECK(b[static_cast<std::size_t>(20 * k)].v == doctest::Approx(q.v).epsilon(1e-12));
    }
    // Every boundary point lies on the CCT or Duv limits of the class (membership as in targets.hpp).
    const auto& k = *quad.ansi_class;
    for (const auto& p : b) {
        const CctResult r = correlated_colour_temperature(uv_1960_from_xy(xy_from_uv_1976(p)));
        const bool on_cct = std::abs(std::abs(r.cct_K - k.cct_K) - k.cct_tolerance_K) < 0.05;
        const bool on_duv = std::abs(std::abs(r.duv - k.duv_centre) - kAnsiC78377DuvTolerance) < 2e-6;
        CHECK((on_cct || on_duv));
    }
}

TEST_CASE("qc report: synthetic lot with awkward names, a far lamp and a bad file") {
    QcSpec spec = load_qc_spec(kExamples + "/spec_F4100.toml");
    QcRun run;
    run.spec = spec;
    // A 4000 K blackbody lies about 1 step from the F4100 centre (computed from the ellipse) and has
    // Ra 100 (CIE 13.3: the reference itself); a 3000 K one is far outside and below 3800 K.
    run.lamps.push_back(planck_lamp(spec, 4000, "near <4000 K> & \"fine\""));
    run.lamps.push_back(planck_lamp(spec, 3950, "lamp_b"));
    run.lamps.push_back(planck_lamp(spec, 3000, "far 3000 K"));
    run.bad_files.push_back({"broken & <odd>.csv", "line 3: 'abc' is not a number"});
    run.stats = lot_statistics(spec, run.lamps);
    REQUIRE(run.lamps[0].pass());
    REQUIRE(!run.lamps[2].pass());

    const std::string html = qc_html_report(run, "<section id=\"correction\"><p>extra</p></section>");
    pugi::xml_document doc;
    const auto parsed = doc.load_string(html.c_str(), pugi::parse_default | pugi::parse_doctype);
    REQUIRE_MESSAGE(parsed, parsed.description() << " at offset " << parsed.offset);
    const pugi::xml_node root = doc.document_element();
    CHECK(count_xpath(root, "//*[@id='uv-diagram']//*[" + has_class("lamp") + "]") == 3);
    // The far lamp is pinned to the window's edge, still one point, marked off-chart.
    CHECK(count_xpath(root, "//*[@id='uv-diagram']//*[" + has_class("off-chart") + "]") == 1);
    CHECK(count_xpath(root, "//*[@id='correction']") == 1);
    CHECK(count_xpath(root, "//*[@id='bad-files']/li") == 1);
    // Names come back unchanged through the XML escaping.
    CHECK(std::string(root.select_node("//*[@id='lamp-table']/tbody/tr[1]/td[2]").node().text().get()) == "near <4000 K> & \"fine\"");
    check_self_contained(html);

    const std::string text = qc_text(run);
    CHECK(text.find("FAIL") != std::string::npos);
    CHECK(text.find("CCT 3000 K < 3800 K") != std::string::npos);
    CHECK(text.find("broken & <odd>.csv: line 3") != std::string::npos);
    CHECK(text.find("pass rate 66.7 %") != std::string::npos);
    CHECK(text.find("Ppk") != std::string::npos);
    CHECK(text.find("Cpk") == std::string::npos);

    const auto cols = qc_lamp_columns();
    CHECK(cols.size() == qc_lamp_values(run.lamps[0]).size());
    CHECK(cols.front() == "name");
    for (const char* c : {"file", "steps", "inside_region", "pass", "failures", "outlier"})
        CHECK(std::find(cols.begin(), cols.end(), c) != cols.end());
    // Rf and Rg are the last two columns (docs/output-schemas.md), empty for a lamp without a CCT.
    REQUIRE(cols.size() >= 2);
    CHECK(cols[cols.size() - 2] == "Rf");
    CHECK(cols.back() == "Rg");
    const auto j = nlohmann::json::parse(qc_json(run).dump());
    CHECK(j.at("count") == 3);
    CHECK(j.at("pass_rate").get<double>() == doctest::Approx(2.0 / 3.0));
    CHECK(j.at("bad_files").at(0).at("file") == "broken & <odd>.csv");
}

TEST_CASE("qc report: an empty lot still gives a well-formed report") {
    QcRun run;
    run.spec = load_qc_spec(kExamples + "/spec_F4100.toml");
    run.bad_files.push_back({"nothing.csv", "no such file or folder"});
    run.stats = lot_statistics(run.spec, run.lamps);
    const std::string html = qc_html_report(run);
    pugi::xml_document doc;
    CHECK(doc.load_string(html.c_str(), pugi::parse_default | pugi::parse_doctype));
    CHECK(count_xpath(doc.document_element(), "//*[@id='uv-diagram']") == 1);
    CHECK(count_xpath(doc.document_element(), "//*[@id='lamp-table']/tbody/tr") == 0);
    CHECK_NOTHROW(qc_text(run));
    const auto j = nlohmann::json::parse(qc_json(run).dump());
    CHECK(j.at("count") == 0);
    CHECK(j.at("pass_rate").is_null());
}

TEST_CASE("qc report: the drift section holds the share chart (recipe and lot per component, error bars, legend outside the plot) and parses as XML") {
    // The demo lot unmixed against its recipe (examples/recipes/triband_4000K.toml): three
    // components, so three recipe markers, three lot markers and one error bar per component with
    // a standard error; the legend lies right of the plot area (x beyond it), never over data.
    const QcSpec spec = load_qc_spec(kExamples + "/spec_F4100.toml");
    QcRun run = run_qc(spec, {kExamples + "/lot_A"}, 2, {}, {}, true);
    const Recipe recipe = load_recipe(std::string(LAMPWRIGHT_SOURCE_DIR) + "/examples/recipes/triband_4000K.toml");
    std::vector<SampledSpectrum> spectra;
    std::vector<std::string> names;
    std::vector<bool> use;
    for (const auto& l : run.lamps) spectra.push_back(l.spectrum), names.push_back(l.name), use.push_back(!l.outlier);
    const DriftDiagnosis d = diagnose_drift(recipe.blend, spectra, names, use);
    CHECK(d.lamps_used == run.lamps.size() - run.stats.outliers);
    const std::string html = qc_html_report(run, drift_html(d, "triband_4000K.toml"));
    pugi::xml_document doc;
    const auto parsed = doc.load_string(html.c_str(), pugi::parse_default | pugi::parse_doctype);
    REQUIRE_MESSAGE(parsed, parsed.description() << " at offset " << parsed.offset);
    const pugi::xml_node root = doc.document_element();
    CHECK(count_xpath(root, "//*[@id='drift-chart']") == 1);
    CHECK(count_xpath(root, "//*[@id='drift-chart']//*[" + has_class("recipe") + "]") == 3);
    CHECK(count_xpath(root, "//*[@id='drift-chart']//*[" + has_class("lot") + "]") == 3);
    CHECK(count_xpath(root, "//*[@id='drift-chart']//*[" + has_class("error-bar") + "]") == 3);
    CHECK(count_xpath(root, "//*[@id='drift-change-chart']//*[" + has_class("change") + "]") == 3);
    CHECK(count_xpath(root, "//*[@id='drift-table']/tbody/tr") == 3);
    CHECK(html.find("mass fraction (%)") != std::string::npos);  // axis unit
    const pugi::xml_node legend = root.select_node("//*[@id='drift-chart']//*[@class='legend']/*[local-name()='rect']").node();
    REQUIRE(legend);
    const SvgPlotArea area = svg_plot_area(600, 320, 170);
    CHECK(legend.attribute("x").as_double() > area.right);
    check_self_contained(html);
}

TEST_CASE("qc report: a lot of 6,000 lamps gets a density plot, stays under 2.5 MB and still names every failing lamp") {
    // 150 copies of the 40 demo lamps under new names (each of the demo lot's failures, the
    // weighing slips among them, fails in every copy: 150 x the lot's failures). One point and one table row per lamp
    // gave about 590 bytes a lamp (5.9 MB for 10,000 lamps, 29 MB for 50,000), i.e. about 3.5 MB
    // here; the limit is a stated size goal (common practice, no source).
    const QcRun& demo = demo_run();
    QcRun run;
    run.spec = demo.spec;
    for (int copy = 0; copy < 150; ++copy)
        for (const auto& l : demo.lamps) {
            LampResult c = l;
            c.name = fmt::format("{}_copy{:03d}", l.name, copy);
            c.file = c.name + ".csv";
            run.lamps.push_back(std::move(c));
        }
    REQUIRE(run.lamps.size() > kQcReportDensityAbove);
    run.stats = lot_statistics(run.spec, run.lamps);
    run.centroid = demo.centroid;
    const std::string html = qc_html_report(run);
    CHECK(html.size() < 2'500'000);
    pugi::xml_document doc;
    REQUIRE(doc.load_string(html.c_str()));
    std::size_t failing = 0, named = 0;
    const auto table = doc.select_node("//table[@id='lamp-table']").node();
    std::set<std::string> rows;
    for (const auto& r : table.select_nodes(".//td[contains(@class, 'name')]")) rows.insert(r.node().text().get());
    for (const auto& l : run.lamps)
        if (!l.pass()) {
            ++failing;
            named += rows.count(l.name);
        }
    CHECK(failing == 150 * (demo.stats.count - demo.stats.passed));
    CHECK(failing > 0);
    CHECK(named == failing);
    // Passing lamps that are not outliers are counted, not listed.
    std::size_t exceptions = 0;
    for (const auto& l : run.lamps) exceptions += (!l.pass() || l.outlier) ? 1 : 0;
    CHECK(rows.size() == exceptions);
    CHECK(count_xpath(doc, "//*[@id='lamps-not-listed']") == 1);
    // The density cells count every lamp once.
    std::size_t counted = 0;
    for (const auto& c : doc.select_nodes(("//*[local-name()='polygon'][" + has_class("density") + "]").c_str())) {
        const std::string title = c.node().child("title").text().get();
        counted += std::stoul(title.substr(0, title.find(' ')));
    }
    CHECK(counted == run.lamps.size());
    CHECK(count_xpath(doc, "//*[" + has_class("density-legend") + "]") == 1);
    check_self_contained(html);
}
