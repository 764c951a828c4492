// Absolute photometry: luminous flux Phi_v = Km * integral S V dl (CIE 15:2004, CIE S 017,
// Km = 683.002 lm/W) of spectra in W/nm, mW/nm or uW/nm, luminous efficacy with the electrical
// power, the file header convention, the TM-27 SpectralQuantity, QC limits and the outputs.
#include "test_support.hpp"

#include "lampwright/colour/assessment.hpp"
#include "lampwright/colour/cie_tables.hpp"
#include "lampwright/colour/colorimetry.hpp"
#include "lampwright/colour/illuminants.hpp"
#include "lampwright/core/error.hpp"
#include "lampwright/core/interpolation.hpp"
#include "lampwright/io/spectrum_io.hpp"
#include "lampwright/production/qc.hpp"
#include "lampwright/report/assessment_report.hpp"
#include "lampwright/report/qc_report.hpp"

#include <doctest/doctest.h>
#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include <cmath>
#include <sstream>
#include <string>

using namespace lampwright;

namespace {

SpectrumFile parse(const std::string& text, const SpectrumReadOptions& o = {}) {
    std::istringstream in(text);
    return parse_spectrum_text(in, "lamp.csv", "lamp", o);
}

// 1 (unit)/nm on 554.5-555.5 nm: on the 1 nm grid, one sample of 1 at 555 nm.
std::string line_555(const std::string& unit_line) { return unit_line + "wavelength_nm,lamp\n380,0\n554,0\n555,1\n556,0\n780,0\n"; }

double v555() { return colour_matching_functions(Observer::cie1931_2deg).xyz[1][555 - kColourFirstNm]; }

std::string problem_of(const std::string& text, const SpectrumReadOptions& o = {}) {
    try {
        parse(text, o);
    } catch (const InputError& e) {
        return std::string(e.what());
    }
    return "<no error>";
}

QcSpec flux_spec() {
    QcSpec s;
    s.name = "flux spec";
    s.centre = {0.3805, 0.3768};
    s.step_ellipse = nearest_step_ellipse(s.centre);
    s.max_steps = 100;
    s.flux_min_lm = 600;
    return s;
}

}  // namespace

TEST_CASE("photometry: 1 W/nm on 555 +- 0.5 nm gives Km x V(555) = 683.002 lm") {
    const auto f = parse(line_555("# units: W/nm\n"));
    REQUIRE(f.spectra.size() == 1);
    CHECK(f.spectra[0].absolute);
    const Assessment a = assess(resample_to_1nm(f.spectra[0]));
    REQUIRE(a.luminous_flux_lm);
    CHECK(v555() == doctest::Approx(1.0).epsilon(1e-6));  // CIE 15:2004 Table T.4: V(555 nm) = 1
    CHECK(*a.luminous_flux_lm == doctest::Approx(683.002 * v555()).epsilon(1e-9));  // CIE S 017: Km = 683.002 lm/W
    CHECK_FALSE(a.efficacy_lm_per_W);  // no power given
}

TEST_CASE("photometry: mW/nm and uW/nm are converted to W/nm") {
    const double w = *assess(resample_to_1nm(parse(line_555("# units: W/nm\n")).spectra[0])).luminous_flux_lm;
    const double mw = *assess(resample_to_1nm(parse(line_555("# Units = mW/nm\n")).spectra[0])).luminous_flux_lm;
    const double uw = *assess(resample_to_1nm(parse(line_555("# units: \xC2\xB5W/nm\n")).spectra[0])).luminous_flux_lm;
    CHECK(mw == doctest::Approx(w * 1e-3).epsilon(1e-12));
    CHECK(uw == doctest::Approx(w * 1e-6).epsilon(1e-12));
    SpectrumReadOptions o;
    o.units = "mW/nm";  // --units for a file that declares none
    const auto f = parse(line_555(""), o);
    CHECK(*assess(resample_to_1nm(f.spectra[0])).luminous_flux_lm == doctest::Approx(mw).epsilon(1e-12));
}

TEST_CASE("photometry: a Planckian radiator scaled to 10 W has flux LER x 10 W, and efficacy flux / electrical power") {
    Spectrum s = planckian(2856);
    s = scaled(s, 10.0 / radiant_integral(s));
    s.absolute = true;
    s.electrical_power_W = 60.0;
    const Assessment a = assess(s);
    REQUIRE(a.luminous_flux_lm);
    REQUIRE(a.efficacy_lm_per_W);
    CHECK(*a.luminous_flux_lm == doctest::Approx(a.ler_lm_per_W * 10.0).epsilon(1e-9));  // Phi_v = K * Phi_e (CIE 15:2004)
    CHECK(*a.efficacy_lm_per_W == doctest::Approx(*a.luminous_flux_lm / 60.0).epsilon(1e-12));
    // A 2856 K radiator over 360-830 nm: LER about 150 lm/W (CIE illuminant A on the visible range).
    CHECK(a.ler_lm_per_W > 100);
    CHECK(a.ler_lm_per_W < 200);
}

TEST_CASE("photometry: power_W in the file header, one for all or one per column; --power-W for files without") {
    auto f = parse("# units: W/nm\n# power_W: 12.5; 20\nwl,a,b\n380,1,1\n555,1,2\n780,1,1\n");
    REQUIRE(f.spectra.size() == 2);
    CHECK(*f.spectra[0].electrical_power_W == 12.5);
    CHECK(*f.spectra[1].electrical_power_W == 20);
    f = parse("# power_W = 7\nwl,a,b\n380,1,1\n555,1,2\n780,1,1\n");
    CHECK(*f.spectra[1].electrical_power_W == 7);
    CHECK_FALSE(f.spectra[1].absolute);  // a power alone does not make a spectrum absolute
    SpectrumReadOptions o;
    o.power_W = 3;
    CHECK(*parse(line_555(""), o).spectra[0].electrical_power_W == 3);
    CHECK(*parse("# power_W: 9\n" + line_555(""), o).spectra[0].electrical_power_W == 9);  // the file's own value wins
}

TEST_CASE("photometry: bad header declarations are errors naming the file, the line and the problem") {
    CHECK(problem_of(line_555("# units: W/m2/nm\n")).find("lamp.csv:1: units 'W/m2/nm' not understood") != std::string::npos);
    CHECK(problem_of("# units: W/nm\n# units: mW/nm\n" + line_555("")).find("lamp.csv:2: units declared twice") != std::string::npos);
    CHECK(problem_of(line_555("# power_W: -3\n")).find("lamp.csv:1: power_W value '-3' is not a positive number") != std::string::npos);
    CHECK(problem_of("# power_W: 1 2 3\nwl,a,b\n380,1,1\n555,1,2\n780,1,1\n").find("power_W gives 3 values for 2 spectra") != std::string::npos);
    SpectrumReadOptions o;
    o.units = "mW/nm";
    CHECK(problem_of(line_555("# units: W/nm\n"), o).find("declares units W/nm but --units says mW/nm") != std::string::npos);
    // An ordinary comment with a colon is only a comment.
    CHECK_FALSE(parse(line_555("# measured: 2026-01-05, sphere 2 m\n")).spectra[0].absolute);
}

TEST_CASE("photometry: the TM-27 SpectralQuantity flux is W/nm, relative is relative, irradiance is no flux") {
    auto xml = [](const std::string& quantity) {
        std::string x = "<IESTM2714><SpectralDistribution><SpectralQuantity>" + quantity + "</SpectralQuantity>\n";
        x += "<SpectralData wavelength=\"380\">0</SpectralData>\n<SpectralData wavelength=\"554\">0</SpectralData>\n";
        x += "<SpectralData wavelength=\"555\">1</SpectralData>\n<SpectralData wavelength=\"556\">0</SpectralData>\n";
        x += "<SpectralData wavelength=\"780\">0</SpectralData></SpectralDistribution></IESTM2714>\n";
        return x;
    };
    auto f = parse_tm27_xml(xml("flux"), "l.xml", "l");
    REQUIRE(f.spectra[0].absolute);
    CHECK(*assess(resample_to_1nm(f.spectra[0])).luminous_flux_lm == doctest::Approx(683.002 * v555()).epsilon(1e-9));
    SpectrumReadOptions o;
    o.units = "mW/nm";
    f = parse_tm27_xml(xml("flux"), "l.xml", "l", o);
    CHECK(*assess(resample_to_1nm(f.spectra[0])).luminous_flux_lm == doctest::Approx(683.002e-3 * v555()).epsilon(1e-9));
    CHECK_FALSE(parse_tm27_xml(xml("relative"), "l.xml", "l").spectra[0].absolute);
    f = parse_tm27_xml(xml("irradiance"), "l.xml", "l");
    CHECK_FALSE(f.spectra[0].absolute);
    REQUIRE(f.warnings.size() == 1);
    CHECK(f.warnings[0].find("SpectralQuantity 'irradiance' is not a spectral radiant flux") != std::string::npos);
    o.units = "W/nm";
    CHECK_THROWS_AS(parse_tm27_xml(xml("irradiance"), "l.xml", "l", o), InputError);
}

TEST_CASE("photometry: text, CSV and JSON give flux and efficacy; relative spectra say relative and give none") {
    Spectrum s = planckian(4000);
    Assessment rel = assess(s);
    CHECK(assessment_text(rel).find("relative spectrum: no flux") != std::string::npos);
    CHECK(assessment_text(rel).find(" lm\n") == std::string::npos);
    const auto cols = assessment_columns();
    REQUIRE(cols.size() >= 4);
    CHECK(cols[cols.size() - 4] == "photometry");
    CHECK(cols.back() == "efficacy_lm_per_W");
    auto vals = assessment_values(rel);
    CHECK(vals[vals.size() - 4] == "relative");
    CHECK(vals[vals.size() - 3].empty());
    CHECK(assessment_json(rel)["luminous_flux_lm"].is_null());
    CHECK(assessment_json(rel)["efficacy_lm_per_W"].is_null());

    s = scaled(s, 1.0 / radiant_integral(s));  // 1 W
    s.absolute = true;
    s.electrical_power_W = 4.0;
    const Assessment abs = assess(s);
    const std::string text = assessment_text(abs);
    CHECK(text.find(fmt::format("luminous flux              {:.1f} lm   efficacy {:.1f} lm/W at 4.00 W", *abs.luminous_flux_lm, *abs.efficacy_lm_per_W)) !=
          std::string::npos);
    vals = assessment_values(abs);
    CHECK(vals[vals.size() - 4] == "absolute");
    CHECK(std::stod(vals[vals.size() - 3]) == doctest::Approx(*abs.luminous_flux_lm).epsilon(1e-5));
    CHECK(vals[vals.size() - 2] == "4.000");
    CHECK(assessment_json(abs)["efficacy_lm_per_W"].get<double>() == doctest::Approx(*abs.efficacy_lm_per_W).epsilon(1e-4));
}

TEST_CASE("photometry: qc flux and efficacy limits are judged per lamp and in the lot statistics") {
    QcSpec spec = flux_spec();
    spec.efficacy_min_lm_per_W = 50;
    Spectrum s = planckian(4000);
    s = scaled(s, 1.0 / radiant_integral(s));
    s.absolute = true;
    const double one_watt_lm = *assess(s).luminous_flux_lm;  // about 200 lm per radiant W
    std::vector<LampResult> lamps;
    for (double w : {4.0, 5.0, 2.0}) {
        Spectrum l = scaled(s, w);
        l.electrical_power_W = 10.0;
        lamps.push_back(judge_lamp(spec, assess(l)));
    }
    lamps.push_back(judge_lamp(spec, assess(planckian(4000))));  // relative
    CHECK(lamps[0].pass());
    CHECK(lamps[1].pass());
    REQUIRE_FALSE(lamps[2].failures.empty());
    CHECK(lamps[2].failures[0] == fmt::format("flux {:.1f} lm < 600 lm", 2 * one_watt_lm));
    REQUIRE(lamps[3].failures.size() == 1);
    CHECK(lamps[3].failures[0] == "relative spectrum: no flux");
    const LotStatistics st = lot_statistics(spec, lamps);
    const LotStatistics::Summary* flux = nullptr;
    for (const auto& q : st.summaries)
        if (q.quantity == "flux_lm") flux = &q;
    REQUIRE(flux);
    CHECK(flux->mean == doctest::Approx(11.0 / 3.0 * one_watt_lm).epsilon(1e-9));  // the three absolute lamps
    bool has_capability = false;
    for (const auto& c : st.capabilities) has_capability |= c.quantity == "flux_lm" && c.all.n == 3 && c.lower == 600.0;
    CHECK(has_capability);
    QcRun run;
    run.spec = spec;
    run.lamps = lamps;
    run.stats = st;
    const std::string text = qc_text(run);
    CHECK(text.find("flux lm") != std::string::npos);
    CHECK(text.find("relative") != std::string::npos);
    CHECK(text.find("flux ≥ 600 lm, efficacy ≥ 50 lm/W") != std::string::npos);
    const auto cols = qc_lamp_columns();
    // Photometry appended after the qc columns, then Rf, Rg (issue 13, appended last).
    REQUIRE(cols.size() >= 7);
    CHECK(cols[cols.size() - 3] == "efficacy_lm_per_W");
    CHECK(cols[cols.size() - 7] == "outlier_note");
    CHECK(qc_lamp_values(lamps[3]).size() == cols.size());
    CHECK(qc_json(run)["spec"]["limits"]["flux_min_lm"] == 600.0);
}
