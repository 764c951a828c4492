// The `lampwright assess` command line: exit status, messages on stderr, CSV/JSON output, and a
// corpus of malformed files (tests/data/bad) next to valid ones (tests/data/good).
#include "test_support.hpp"

#include <doctest/doctest.h>
#include <nlohmann/json.hpp>

#include <cmath>
#include <fstream>
#include <sstream>
#include <string>
#include <vector>

namespace {

const std::string kData = std::string(LAMPWRIGHT_SOURCE_DIR) + "/tests/data";

using lwtest::quote;
using lwtest::run_cli;
using lwtest::TempDir;
using Run = lwtest::CliRun;

std::vector<std::string> lines(const std::string& text) {
    std::vector<std::string> v;
    std::istringstream in(text);
    for (std::string l; std::getline(in, l);) v.push_back(l);
    return v;
}

std::vector<std::string> cells(const std::string& line) {
    std::vector<std::string> v;
    std::string c;
    std::istringstream in(line);
    while (std::getline(in, c, ',')) v.push_back(c);
    if (!line.empty() && line.back() == ',') v.push_back("");
    return v;
}

std::string bad(const std::string& name) { return kData + "/bad/" + name; }
std::string good(const std::string& name) { return kData + "/good/" + name; }

// The value of column `name` in a CSV row, given the header.
std::string column(const std::string& header, const std::string& row, const std::string& name) {
    const auto h = cells(header), r = cells(row);
    for (std::size_t i = 0; i < h.size(); ++i)
        if (h[i] == name) return i < r.size() ? r[i] : "";
    FAIL("no column " << name);
    return "";
}

}  // namespace

TEST_CASE("cli: every malformed file gives exit status 1 and an error with the file, the line and the reason") {
    struct Case {
        const char* file;
        int line;  // 0 = the problem has no single line
        const char* reason;
    };
    // Lines as written in the fixtures (their first line is a '#' comment, then a header).
    const Case cases[] = {
        {"non_numeric.csv", 6, "not a number"},
        {"nan_value.csv", 8, "not a finite number"},
        {"inf_value.csv", 10, "not a finite number"},
        {"non_increasing.csv", 11, "does not increase"},
        {"short_range.csv", 0, "covers 400-700 nm"},
        {"ragged_row.csv", 14, "row has 3 columns"},
        {"empty.csv", 0, "no spectral data"},
        {"all_zero.csv", 0, "no positive value"},
        {"large_negative.csv", 17, "negative beyond noise"},
        {"micrometres.csv", 3, "must be the wavelength in nm"},
    };
    for (const auto& c : cases) {
        const std::string file = c.file;
        CAPTURE(file);
        const Run r = run_cli("assess --format csv " + quote(bad(c.file)));
        CHECK_FALSE(r.crashed);  // never killed by a signal; common practice, no source
        CHECK(r.exit_code == 1);  // assess --help: 1 = some input bad
        const std::string where = c.line > 0 ? std::string(c.file) + ":" + std::to_string(c.line) + ":" : std::string(c.file) + ":";
        bool found = false;
        for (const auto& l : lines(r.err))
            if (l.find(where) != std::string::npos && l.find(c.reason) != std::string::npos) found = true;
        CAPTURE(r.err);
        CHECK(found);  // error line names file:line and the reason; common practice, no source
        // Only the CSV header on stdout.
        CHECK(lines(r.out).size() == 1);  // only the CSV header; common practice, no source
    }
}

TEST_CASE("cli: a missing file and a folder are bad input (exit status 1) named on stderr") {
    const Run missing = run_cli("assess " + quote(kData + "/good/no_such_lamp.csv"));
    CHECK_FALSE(missing.crashed);  // never killed by a signal; common practice, no source
    CHECK(missing.exit_code == 1);  // exit status as assess --help states; common practice, no source
    CHECK(missing.err.find("no_such_lamp.csv") != std::string::npos);  // the error names the file; common practice, no source
    const Run folder = run_cli("assess " + quote(kData + "/good"));
    CHECK_FALSE(folder.crashed);  // never killed by a signal; common practice, no source
    CHECK(folder.exit_code == 1);  // exit status as assess --help states; common practice, no source
    CHECK(folder.err.find("folder") != std::string::npos);  // reader message for a folder; common practice, no source
}

TEST_CASE("cli: --format csv header and the rows of two good files") {
    const Run r = run_cli("assess --format csv " + quote(good("planck_3000K.csv")) + " " + quote(good("planck_4000K.txt")));
    CHECK_FALSE(r.crashed);  // never killed by a signal; common practice, no source
    CHECK(r.exit_code == 0);  // exit status as assess --help states; common practice, no source
    const auto out = lines(r.out);
    REQUIRE(out.size() == 3);  // precondition; common practice, no source
    const std::string& header = out[0];
    // assessment_report.hpp: stable column order.
    CHECK(header.rfind("name,x,y,u_prime,v_prime,cct_K,duv,Ra,R1,", 0) == 0);  // project CSV column contract (assessment_report.hpp); common practice, no source
    CHECK(header.find(",R13,R14,ler_lm_per_W") != std::string::npos);  // project CSV column contract; common practice, no source
    const auto h = cells(header);
    REQUIRE(h.size() >= 23);  // precondition; common practice, no source
    for (int i = 1; i <= 14; ++i) CHECK(h[7 + i] == "R" + std::to_string(i));  // project CSV column contract; common practice, no source
    CHECK(h[22] == "ler_lm_per_W");  // project CSV column contract; common practice, no source

    CHECK(cells(out[1]).at(0) == "planck_3000K");  // single-column file named by its stem; common practice, no source
    CHECK(cells(out[2]).at(0) == "planck_4000K");  // single-column file named by its stem; common practice, no source
    // The fixtures are Planckian radiators (Planck's law, CIE 15:2004 c2 = 1.4388e-2 m K) at 5 nm:
    // CCT within 0.5 K of nominal, Duv ~ 0, Ra = 100 up to the 5 nm sampling (CIE 13.3-1995).
    const double nominal[] = {3000, 4000};
    for (int k = 0; k < 2; ++k) {
        CAPTURE(k);
        const std::string& row = out[1 + k];
        CHECK(std::abs(std::stod(column(header, row, "cct_K")) - nominal[k]) <= 0.5);  // Planck's law, CIE 15:2004
        CHECK(std::abs(std::stod(column(header, row, "duv"))) <= 1e-4);  // Planckian fixture lies on the locus (CIE 15:2004 9.5)
        CHECK(std::abs(std::stod(column(header, row, "Ra")) - 100) <= 0.05);  // CIE 13.3-1995 (exact case)
        CHECK(column(header, row, "reference") == "planckian");                 // CIE 13.3-1995, below 5000 K
        CHECK(std::stod(column(header, row, "ler_lm_per_W")) > 0);  // LER > 0; common practice, no source
    }
    CHECK(r.err.empty());  // no warnings for clean input; common practice, no source
}

TEST_CASE("cli: a good file and a bad file together: the good row is printed and the exit status is 1") {
    const Run r = run_cli("assess --format csv " + quote(bad("nan_value.csv")) + " " + quote(good("planck_3000K.csv")) +
                          " " + quote(bad("ragged_row.csv")));
    CHECK_FALSE(r.crashed);  // never killed by a signal; common practice, no source
    CHECK(r.exit_code == 1);  // assess --help: 1 = some input bad, the rest still reported
    const auto out = lines(r.out);
    REQUIRE(out.size() == 2);  // precondition; common practice, no source
    CHECK(out[1].rfind("planck_3000K,", 0) == 0);  // good file still reported; common practice, no source
    CHECK(r.err.find("nan_value.csv:8:") != std::string::npos);  // file:line of the NaN fixture
    CHECK(r.err.find("ragged_row.csv:14:") != std::string::npos);  // file:line of the ragged fixture
}

TEST_CASE("cli: usage errors give exit status 2") {
    // assess --help: 2 = usage error.
    const std::string f = quote(good("planck_3000K.csv"));
    const char* const bad_usages[] = {
        "assess --bogus-option ",  "assess --format xml ", "assess --observer 5 ", "assess --cct-method guess ",
        "frobnicate ",
    };
    for (const char* u : bad_usages) {
        const std::string usage = u;
        CAPTURE(usage);
        const Run r = run_cli(std::string(u) + f);
        CHECK_FALSE(r.crashed);  // never killed by a signal; common practice, no source
        CHECK(r.exit_code == 2);  // exit status as assess --help states; common practice, no source
        CHECK(r.err.find("error") != std::string::npos);  // message on stderr; common practice, no source
        CHECK(r.out.empty());  // nothing on stdout; common practice, no source
    }
    const Run no_files = run_cli("assess");
    CHECK(no_files.exit_code == 2);  // exit status as assess --help states; common practice, no source
    const Run nothing = run_cli("");
    CHECK(nothing.exit_code == 2);  // exit status as assess --help states; common practice, no source
    const Run help = run_cli("assess --help");
    CHECK(help.exit_code == 0);  // exit status as assess --help states; common practice, no source
    CHECK(help.out.find("Exit status") != std::string::npos);  // help text documents the exit status
}

TEST_CASE("cli: '-' reads standard input") {
    const Run r = run_cli("assess --format csv -", good("planck_3000K.csv"));
    CHECK_FALSE(r.crashed);  // never killed by a signal; common practice, no source
    CHECK(r.exit_code == 0);  // exit status as assess --help states; common practice, no source
    const auto out = lines(r.out);
    REQUIRE(out.size() == 2);  // precondition; common practice, no source
    CHECK(out[1].rfind("stdin,", 0) == 0);  // '-' is named stdin; common practice, no source
}

TEST_CASE("cli: --format json gives one object per spectrum with the CSV keys") {
    const Run r = run_cli("assess --format json " + quote(good("planck_3000K.csv")) + " " + quote(good("planck_4000K.txt")));
    CHECK(r.exit_code == 0);  // exit status as assess --help states; common practice, no source
    const auto j = nlohmann::json::parse(r.out);
    REQUIRE(j.is_array());  // precondition; common practice, no source
    REQUIRE(j.size() == 2);  // precondition; common practice, no source
    CHECK(j[0]["name"] == "planck_3000K");  // JSON keys equal the CSV columns; common practice, no source
    CHECK(std::abs(j[0]["cct_K"].get<double>() - 3000) <= 0.5);  // Planck's law, CIE 15:2004
    CHECK(j[1]["R14"].is_number());  // JSON keys equal the CSV columns; common practice, no source
    CHECK(j[1]["warnings"].is_array());  // common practice, no source
}

TEST_CASE("cli: --observer 10 changes x, y but not CCT or Ra, and --cct-method robertson works") {
    const std::string f = quote(good("planck_4000K.txt"));
    const Run two = run_cli("assess --format csv " + f), ten = run_cli("assess --format csv --observer 10 " + f),
              rob = run_cli("assess --format csv --cct-method robertson " + f);
    for (const Run* r : {&two, &ten, &rob}) {
        CHECK(r->exit_code == 0);  // exit status as assess --help states; common practice, no source
        REQUIRE(lines(r->out).size() == 2);  // precondition; common practice, no source
    }
    const auto h = lines(two.out)[0];
    const auto a = lines(two.out)[1], b = lines(ten.out)[1], c = lines(rob.out)[1];
    CHECK(column(h, a, "x") != column(h, b, "x"));               // CIE 1931 vs CIE 1964 observer
    CHECK(column(h, a, "cct_K") == column(h, b, "cct_K"));       // CCT always uses the 2-degree observer (CIE 15:2004)
    CHECK(column(h, a, "Ra") == column(h, b, "Ra"));             // CIE 13.3 uses the 2-degree observer
    CHECK(column(h, b, "observer") == "10");  // observer column; common practice, no source
    CHECK(std::abs(std::stod(column(h, c, "cct_K")) - 4000) <= 4000 * 0.0015);  // Robertson 1968 (bound as in test_temperature)
}

TEST_CASE("cli: odd but valid spectra never crash the program") {
    // A single green line and a UV line have a chromaticity but no CCT: warnings, exit status 0.
    // Power only beyond 830 nm has no chromaticity at all: an error naming the file, exit status 1.
    const TempDir dir;
    auto write = [&](const std::string& name, int from, int to, int line_nm) {
        std::ofstream out(dir.path / name);
        out << "wavelength_nm,value\n";
        for (int nm = from; nm <= to; nm += 5) out << nm << ',' << (nm == line_nm ? 1 : 0) << '\n';
        return dir.file(name);
    };
    const std::string files[] = {write("ir_only.csv", 380, 900, 900), write("green_line.csv", 380, 780, 550),
                                 write("uv_line.csv", 380, 780, 380), write("far_ir.csv", 380, 1200, 1200)};
    for (const auto& f : files) {
        CAPTURE(f);
        for (const char* format : {"csv", "json", "text"}) {
            const std::string format_name = format;
            CAPTURE(format_name);
            const Run r = run_cli(std::string("assess --format ") + format + " " + quote(f));
            CHECK_FALSE(r.crashed);  // never killed by a signal; common practice, no source
            const bool no_visible_power = f.find("ir") != std::string::npos;
            if (no_visible_power) {
                CHECK(r.exit_code == 1);  // bad input, as assess --help states; common practice, no source
                CHECK(r.err.find(f) != std::string::npos);
                CHECK(r.err.find("no visible power") != std::string::npos);
            } else {
                CHECK(r.exit_code == 0);  // exit status as assess --help states; common practice, no source
                CHECK(r.err.find("warning") != std::string::npos);  // problems reported as warnings; common practice, no source
            }
        }
    }
}

TEST_CASE("cli: assess of a flat 1e304 spectrum prints finite LER and centroid; 1e308 exits 1 naming the spectrum and X, Y, Z") {
    TempDir dir;
    std::string big = "wavelength_nm,big\n", huge = "wavelength_nm,huge\n";
    for (int w = 380; w <= 780; w += 5) {
        big += std::to_string(w) + ",1e304\n";
        huge += std::to_string(w) + ",1e308\n";
    }
    const Run r = run_cli("assess --format csv " + quote(dir.write("big.csv", big)));
    CHECK(r.exit_code == 0);
    const auto l = lines(r.out);
    REQUIRE(l.size() == 2);
    CHECK(std::stod(column(l[0], l[1], "ler_lm_per_W")) == doctest::Approx(182.0).epsilon(1e-3));
    CHECK(std::stod(column(l[0], l[1], "centroid_nm")) == doctest::Approx(580.0).epsilon(1e-9));
    CHECK(r.out.find("inf") == std::string::npos);
    const Run h = run_cli("assess " + quote(dir.write("huge.csv", huge)));
    CHECK(h.exit_code == 1);
    CHECK(h.out.empty());
    CHECK(h.err.find("huge.csv: spectrum '") != std::string::npos);
    CHECK(h.err.find("values too large") != std::string::npos);
}

TEST_CASE("cli: a narrow spike of 5e306 W/nm is assessed like the same shape at 5, not refused as 'resampling overflowed'") {
    // Sprague's segment coefficients (126 f0) overflowed for such values before the scaling in
    // resample_to_1nm (interpolation.cpp); the radiant integral itself stays finite here.
    const TempDir dir;
    std::string unit = "wavelength_nm,lamp\n", huge = unit;
    for (int nm = 380; nm <= 780; nm += 5) {
        const char* v = nm == 560 ? "5" : (nm == 555 || nm == 565 ? "2" : "1");
        const char* e = nm >= 555 && nm <= 565 ? "" : "e-6";
        unit += std::to_string(nm) + "," + v + e + "\n";
        huge += std::to_string(nm) + "," + v + (nm >= 555 && nm <= 565 ? "e306" : "e300") + "\n";
    }
    const Run a = run_cli("assess --format csv " + quote(dir.write("unit.csv", unit)));
    const Run b = run_cli("assess --format csv " + quote(dir.write("huge.csv", huge)));
    CAPTURE(b.err);
    REQUIRE(a.exit_code == 0);
    CHECK(b.exit_code == 0);
    const auto la = lines(a.out), lb = lines(b.out);
    REQUIRE(la.size() == 2);
    REQUIRE(lb.size() == 2);
    for (const char* c : {"x", "y", "u_prime", "v_prime", "duv", "ler_lm_per_W", "peak_nm", "fwhm_nm", "dominant_nm"}) {
        CAPTURE(c);
        CHECK(column(lb[0], lb[1], c) == column(la[0], la[1], c));
    }
}

TEST_CASE("cli: assess --units W/nm --power-W gives flux and efficacy in CSV and JSON; a relative file gives empty cells; a bad unit is a usage error") {
    TempDir dir;
    const std::string f = dir.write("line.csv", "wavelength_nm,lamp\n380,0\n554,0\n555,1\n556,0\n780,0\n");
    Run r = run_cli("assess --units W/nm --power-W 2 --format csv " + quote(f));
    REQUIRE(r.exit_code == 0);
    auto l = lines(r.out);
    REQUIRE(l.size() == 2);
    CHECK(column(l[0], l[1], "photometry") == "absolute");
    CHECK(std::stod(column(l[0], l[1], "luminous_flux_lm")) == doctest::Approx(683.002).epsilon(1e-5));  // Km V(555), CIE S 017
    CHECK(std::stod(column(l[0], l[1], "efficacy_lm_per_W")) == doctest::Approx(341.501).epsilon(1e-5));
    r = run_cli("assess --format json " + quote(f));
    REQUIRE(r.exit_code == 0);
    const auto j = nlohmann::json::parse(r.out);
    CHECK(j[0]["photometry"] == "relative");
    CHECK(j[0]["luminous_flux_lm"].is_null());
    r = run_cli("assess " + quote(f));
    CHECK(r.out.find("relative spectrum: no flux") != std::string::npos);
    r = run_cli("assess --units W/m2 " + quote(f));
    CHECK(r.exit_code == 2);
    CHECK(r.err.find("--units must be W/nm, mW/nm, uW/nm (or µW/nm) or relative, not 'W/m2'") != std::string::npos);
    r = run_cli("assess --power-W -1 " + quote(f));
    CHECK(r.exit_code == 2);
    CHECK(r.err.find("--power-W must be a number above 0 up to 100000 W") != std::string::npos);
}

TEST_CASE("cli: the spectra of a file are assessed in parallel and printed in the file's order, the same for any thread count") {
    // 300 Planckian columns of a table, every fifth flat at 1e308 (X, Y, Z overflow: that spectrum
    // refused and named, as above, the rest reported): each row's figures do not
    // depend on which thread computed them (common practice, no source), and the error messages
    // keep the file's order too.
    const TempDir dir;
    std::string text = "nm";
    for (int c = 0; c < 300; ++c) text += ",T" + std::to_string(c);
    text += "\n";
    for (int nm = 380; nm <= 780; ++nm) {
        text += std::to_string(nm);
        for (int c = 0; c < 300; ++c) {
            const double t = 2000 + 20 * c, l = nm * 1e-9;
            double v = 1 / (std::pow(l, 5) * (std::exp(1.4388e-2 / (l * t)) - 1)) * 1e-12;
            if (c % 5 == 4) v = 1e308;
            text += "," + (c % 5 == 4 ? std::string("1e308") : std::to_string(v));
        }
        text += "\n";
    }
    const std::string file = dir.write("many.csv", text);
    const Run one = run_cli("assess --format csv --threads 1 " + quote(file));
    const Run two = run_cli("assess --format csv --threads 2 " + quote(file));
    const Run all = run_cli("assess --format csv " + quote(file));
    CHECK(one.out == two.out);
    CHECK(one.out == all.out);
    CHECK(one.err == two.err);
    CHECK(one.exit_code == two.exit_code);
    const auto rows = lines(one.out);
    REQUIRE(rows.size() == 1 + 240);  // header and the 240 good columns
    int previous = -1;
    for (std::size_t r = 1; r < rows.size(); ++r) {
        const std::string name = cells(rows[r]).front();
        const int c = std::stoi(name.substr(1));
        CHECK(c > previous);
        previous = c;
    }
    CHECK(run_cli("assess --threads 0 " + quote(file)).exit_code == 2);
}
