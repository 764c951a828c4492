// Reading spectra from delimited text: layouts that must be accepted, and every kind of bad input
// with the file and line it is reported against.
#include "lampwright/core/error.hpp"
#include "lampwright/io/spectrum_io.hpp"
#include "lampwright/core/text_file.hpp"

#include "test_support.hpp"

#include <doctest/doctest.h>
#include <fmt/format.h>

#include <sys/stat.h>

#include <cmath>
#include <filesystem>
#include <fstream>
#include <functional>
#include <sstream>
#include <string>

using namespace lampwright;

namespace {

// Rows "<nm><sep><value>" for 380..780 nm in 20 nm steps (21 rows): the minimum colorimetric
// range of CIE 15:2004.
std::string rows(const std::string& sep, const std::function<std::string(int)>& value) {
    std::string s;
    for (int nm = 380; nm <= 780; nm += 20) s += std::to_string(nm) + sep + value(nm) + "\n";
    return s;
}
std::string ones(int) { return "1"; }

SpectrumFile parse(const std::string& text, const std::string& source = "lamp.csv", const std::string& stem = "lamp") {
    std::istringstream in(text);
    return parse_spectrum_text(in, source, stem);
}

// Parses text that must fail; returns the error.
InputError parse_error(const std::string& text, const std::string& source = "lamp.csv") {
    try {
        parse(text, source);
    } catch (const InputError& e) {
        return e;
    }
    FAIL("no InputError for input:\n" << text);
    return InputError("", 0, "");
}

using lwtest::TempDir;

}  // namespace

TEST_CASE("spectrum text: header row and '#' comments, one value column named by the file stem") {
    const auto f = parse("# measured with a spectroradiometer\n# second comment\nwavelength_nm,power\n" + rows(",", ones));
    REQUIRE(f.spectra.size() == 1);  // reader contract (spectrum_io.hpp); common practice, no source
    CHECK(f.spectra[0].name == "lamp");  // single-column files are named by the file (spectrum_io.hpp contract)
    CHECK(f.spectra[0].wavelengths_nm.size() == 21);  // reader contract (spectrum_io.hpp); common practice, no source
    CHECK(f.spectra[0].wavelengths_nm.front() == 380);  // reader contract (spectrum_io.hpp); common practice, no source
    CHECK(f.spectra[0].wavelengths_nm.back() == 780);  // reader contract (spectrum_io.hpp); common practice, no source
    CHECK(f.warnings.empty());  // reader contract (spectrum_io.hpp); common practice, no source
}

TEST_CASE("spectrum text: no header row") {
    const auto f = parse(rows(",", [](int nm) { return std::to_string(nm / 100.0); }));
    REQUIRE(f.spectra.size() == 1);  // reader contract (spectrum_io.hpp); common practice, no source
    CHECK(f.spectra[0].values[1] == doctest::Approx(4.0));  // 400 nm / 100, common practice, no source
}

TEST_CASE("spectrum text: several value columns are named by the header, or stem:column without one") {
    const auto with_header = parse("wavelength_nm,lamp A,lamp B,lamp C\n" + rows(",", [](int) { return "1,2,3"; }));
    REQUIRE(with_header.spectra.size() == 3);  // reader contract (spectrum_io.hpp); common practice, no source
    CHECK(with_header.spectra[0].name == "lamp A");  // spectrum_io.hpp contract
    CHECK(with_header.spectra[1].name == "lamp B");  // reader contract (spectrum_io.hpp); common practice, no source
    CHECK(with_header.spectra[2].name == "lamp C");  // reader contract (spectrum_io.hpp); common practice, no source
    CHECK(with_header.spectra[2].values[0] == 3);  // reader contract (spectrum_io.hpp); common practice, no source

    const auto no_header = parse(rows(",", [](int) { return "1,2"; }), "lot.csv", "lot");
    REQUIRE(no_header.spectra.size() == 2);  // reader contract (spectrum_io.hpp); common practice, no source
    CHECK(no_header.spectra[0].name == "lot:2");  // column numbers count the wavelength column as 1
    CHECK(no_header.spectra[1].name == "lot:3");  // reader contract (spectrum_io.hpp); common practice, no source
}

TEST_CASE("spectrum text: comma, semicolon with decimal comma, tab and space separators") {
    const auto comma = parse(rows(",", [](int) { return "0.5"; }));
    const auto semicolon = parse("wavelength_nm;value\n" + rows(";", [](int) { return "0,5"; }));
    const auto semicolon_dot = parse(rows(";", [](int) { return "0.5"; }));
    const auto tab = parse(rows("\t", [](int) { return "0.5"; }));
    const auto space = parse(rows("   ", [](int) { return "0.5"; }));
    for (const auto* f : {&comma, &semicolon, &semicolon_dot, &tab, &space}) {
        REQUIRE(f->spectra.size() == 1);  // reader contract (spectrum_io.hpp); common practice, no source
        CHECK(f->spectra[0].values.size() == 21);  // reader contract (spectrum_io.hpp); common practice, no source
        CHECK(f->spectra[0].values[7] == 0.5);  // spectrum_io.hpp: ';' allows a decimal comma
        CHECK(f->spectra[0].wavelengths_nm[7] == 520);  // reader contract (spectrum_io.hpp); common practice, no source
    }
}

TEST_CASE("spectrum text: trailing comments, blank lines, CRLF line ends, a UTF-8 BOM and a trailing separator") {
    std::string text = "\xEF\xBB\xBFwavelength_nm,value\r\n\r\n";
    for (int nm = 380; nm <= 780; nm += 20) text += std::to_string(nm) + ",2, # note\r\n";
    const auto f = parse(text);
    REQUIRE(f.spectra.size() == 1);  // reader contract (spectrum_io.hpp); common practice, no source
    CHECK(f.spectra[0].name == "lamp");  // reader contract (spectrum_io.hpp); common practice, no source
    CHECK(f.spectra[0].values.size() == 21);  // reader contract (spectrum_io.hpp); common practice, no source
    CHECK(f.spectra[0].values[20] == 2);  // common practice for spreadsheet exports, no source
}

TEST_CASE("spectrum text: small negative noise is set to zero and counted in one warning") {
    // spectrum_io.hpp: negative values down to -1 % of the peak are noise.
    const auto f = parse(rows(",", [](int nm) { return nm == 400 || nm == 420 || nm == 760 ? "-0.005" : "1"; }));
    REQUIRE(f.spectra.size() == 1);  // reader contract (spectrum_io.hpp); common practice, no source
    CHECK(f.spectra[0].values[1] == 0);  // reader contract (spectrum_io.hpp); common practice, no source
    CHECK(f.spectra[0].values[2] == 0);  // reader contract (spectrum_io.hpp); common practice, no source
    CHECK(f.spectra[0].values[19] == 0);  // reader contract (spectrum_io.hpp); common practice, no source
    REQUIRE(f.warnings.size() == 1);  // reader contract (spectrum_io.hpp); common practice, no source
    CHECK(f.warnings[0].find("lamp.csv") != std::string::npos);  // reader contract (spectrum_io.hpp); common practice, no source
    CHECK(f.warnings[0].find("3 small negative") != std::string::npos);  // the count of clipped values
}

TEST_CASE("spectrum text errors name the source and the line") {
    // Each case: text, line expected in InputError::line() (0 = no single line), words of the reason.
    struct Case {
        const char* what;
        std::string text;
        std::size_t line;
        const char* reason;
    };
    const std::string header = "# test\nwavelength_nm,value\n";  // lines 1-2; the 380 nm row is line 3
    auto bad_at = [](int bad_nm, const std::string& cell) {
        return rows(",", [=](int nm) { return nm == bad_nm ? cell : std::string("1"); });
    };
    const Case cases[] = {
        {"non-numeric cell", header + bad_at(440, "abc"), 6, "not a number"},
        {"NaN", header + bad_at(400, "NaN"), 4, "not a finite number"},
        {"Inf", header + bad_at(780, "-inf"), 23, "not a finite number"},
        {"empty cell", "wavelength_nm,a,b\n380,1,1\n400,,1\n", 3, "not a number"},
        {"non-increasing wavelength", header + rows(",", ones) + "780,1\n", 24, "does not increase"},
        {"decreasing wavelength", header + "380,1\n500,1\n450,1\n780,1\n", 5, "does not increase"},
        {"ragged row", header + bad_at(500, "1,2"), 9, "row has 3 columns, expected 2"},
        {"only one column", header + "380\n", 3, "at least two columns"},
        {"large negative value", header + bad_at(600, "-0.5"), 14, "negative beyond noise"},
        {"wavelengths in micrometres", "# um\n0.38,1\n0.5,1\n0.78,1\n", 2, "must be the wavelength in nm"},
        {"too short range 400-700 nm", "400,1\n500,1\n600,1\n700,1\n", 0, "covers 400-700 nm"},
        {"empty file", "", 0, "no spectral data"},
        {"only comments and a header", "# nothing\nwavelength_nm,value\n", 0, "no spectral data"},
        {"all-zero spectrum", header + rows(",", [](int) { return "0"; }), 0, "no positive value"},
        {"non-positive wavelength", "-5,1\n380,1\n", 1, "not positive"},
    };
    for (const auto& c : cases) {
        const std::string what = c.what;
        CAPTURE(what);
        const InputError e = parse_error(c.text, "lamp_07.csv");
        CHECK(e.line() == c.line);  // lamp_07.csv line as written above
        CHECK(e.source() == "lamp_07.csv");  // reader contract (spectrum_io.hpp); common practice, no source
        CHECK(std::string(e.what()).find("lamp_07.csv") != std::string::npos);  // reader contract (spectrum_io.hpp); common practice, no source
        CHECK(e.problem().find(c.reason) != std::string::npos);  // reader contract (spectrum_io.hpp); common practice, no source
        if (c.line > 0) CHECK(std::string(e.what()).find("lamp_07.csv:" + std::to_string(c.line) + ":") != std::string::npos);  // reader contract (spectrum_io.hpp); common practice, no source
    }
}

TEST_CASE("read_spectrum_file: reads a file, names it by its stem, and reports missing files and folders") {
    const TempDir tmp("lampwright_io_tests");
    const auto& dir = tmp.path;
    const auto good = dir / "warm_white.csv";
    {
        std::ofstream out(good);
        out << "wavelength_nm,value\n" << rows(",", ones);
    }
    const auto f = read_spectrum_file(good.string());
    REQUIRE(f.spectra.size() == 1);  // reader contract (spectrum_io.hpp); common practice, no source
    CHECK(f.spectra[0].name == "warm_white");  // reader contract (spectrum_io.hpp); common practice, no source

    const auto bad = dir / "broken_lamp.csv";
    {
        std::ofstream out(bad);
        out << "wavelength_nm,value\n380,1\n400,x\n";
    }
    try {
        read_spectrum_file(bad.string());
        FAIL("no error for a non-numeric cell");
    } catch (const InputError& e) {
        CHECK(e.line() == 3);  // reader contract (spectrum_io.hpp); common practice, no source
        CHECK(std::string(e.what()).find(bad.string()) != std::string::npos);  // the path as given
    }

    CHECK_THROWS_WITH_AS(read_spectrum_file((dir / "no_such_file.csv").string()),  // reader contract (spectrum_io.hpp); common practice, no source
                         doctest::Contains("no_such_file.csv"), InputError);
    CHECK_THROWS_WITH_AS(read_spectrum_file(dir.string()), doctest::Contains("folder"), InputError);  // reader contract (spectrum_io.hpp); common practice, no source
}

TEST_CASE("write_spectrum_csv writes a file parse_spectrum_text reads back") {
    Spectrum s{"x", 380, {}};
    for (int nm = 380; nm <= 780; ++nm) s.values.push_back(1.0 + 1e-3 * (nm - 380));
    std::ostringstream out;
    write_spectrum_csv(out, s, "power");
    std::istringstream in(out.str());
    const auto f = parse_spectrum_text(in, "round-trip", "rt");
    REQUIRE(f.spectra.size() == 1);  // reader contract (spectrum_io.hpp); common practice, no source
    CHECK(f.spectra[0].name == "rt");  // reader contract (spectrum_io.hpp); common practice, no source
    REQUIRE(f.spectra[0].values.size() == s.values.size());  // reader contract (spectrum_io.hpp); common practice, no source
    for (std::size_t i = 0; i < s.values.size(); ++i) CHECK(std::abs(f.spectra[0].values[i] - s.values[i]) <= 1e-7);  // 8 significant digits
}

TEST_CASE("file_stem drops folders and the extension") {
    CHECK(file_stem("lots/lamp_07.csv") == "lamp_07");  // spectrum_io.hpp contract
    CHECK(file_stem("/a/b/c.tar.txt") == "c.tar");  // reader contract (spectrum_io.hpp); common practice, no source
    CHECK(file_stem("plain") == "plain");  // reader contract (spectrum_io.hpp); common practice, no source
}

TEST_CASE("spectrum text: tab-separated rows with a decimal comma") {
    // Spreadsheet exports in locales with a decimal comma use tabs or semicolons between columns
    // (common practice, no source).
    std::string text = "wavelength_nm\tW/nm\n";
    for (int nm = 380; nm <= 780; nm += 10) text += std::to_string(nm) + "\t0," + std::to_string(nm) + "\n";
    std::istringstream in(text);
    const auto f = lampwright::parse_spectrum_text(in, "tabs.txt", "tabs");
    REQUIRE(f.spectra.size() == 1);
    CHECK(f.spectra[0].values.front() == doctest::Approx(0.380));
    CHECK(f.spectra[0].values.back() == doctest::Approx(0.780));
}

TEST_CASE("spectrum text: a gap in the visible range (450-520 nm missing) is warned about, with its line; uniform grids are not") {
    // A gap: a step above 10 nm (the common coarse instrument grid; CIE 15:2004 recommends 5 nm) and
    // above twice the median step; common practice, no source.
    auto table = [](double step, double gap_from, double gap_to) {
        std::string t = "wavelength_nm,lamp\n";
        for (double nm = 380; nm <= 780 + 1e-9; nm += step)
            if (nm <= gap_from || nm >= gap_to) t += std::to_string(nm) + ",1.0\n";
        return t;
    };
    std::istringstream gap(table(5, 450, 520));
    const auto g = parse_spectrum_text(gap, "gap.csv", "gap");
    REQUIRE(g.warnings.size() == 1);
    CHECK(g.warnings[0].find("gap.csv:17:") == 0);  // line 1 header, 380 nm on line 2, 450 on line 16, 520 (after the gap) on 17
    CHECK(g.warnings[0].find("no data from 450 to 520 nm") != std::string::npos);
    for (double step : {1.0, 5.0, 10.0, 20.0}) {
        std::istringstream ok(table(step, 1e9, 1e9));
        CHECK(parse_spectrum_text(ok, "ok.csv", "ok").warnings.empty());
    }
}

TEST_CASE("spectrum readers: a wavelength outside 100-100,000 nm is refused with its line, in text and TM-27 XML, before any grid is built") {
    // 1e9 nm would mean a billion-point 1 nm grid, 2147483647 nm an endless grid loop, 3e9 nm a
    // float-to-int overflow: each must be refused where it is written.
    const std::string header = "wavelength_nm,value\n";  // line 1; the 380 nm row is line 2, 780 nm line 22
    for (const std::string huge : {"1e9", "2147483647", "3e9", "100000.5"}) {
        CAPTURE(huge);
        const InputError e = parse_error(header + rows(",", ones) + huge + ",1\n", "lamp_07.csv");
        CHECK(e.source() == "lamp_07.csv");
        CHECK(e.line() == 23);
        CHECK(e.problem().find("outside 100-100000 nm") != std::string::npos);
    }
    const InputError low = parse_error("50,1\n" + rows(",", ones), "lamp_07.csv");
    CHECK(low.line() == 1);
    CHECK(low.problem().find("wavelength 50 nm is outside 100-100000 nm") != std::string::npos);
    // The physical limits themselves are accepted.
    const SpectrumFile edges = parse("100,1\n" + rows(",", ones) + "100000,1\n");
    REQUIRE(edges.spectra.size() == 1);
    CHECK(edges.spectra[0].wavelengths_nm.back() == 100000.0);
    // TM-27 XML: the line of the element.
    std::string xml = "<?xml version=\"1.0\"?>\n<IESTM2714>\n<SpectralDistribution>\n";  // lines 1-3
    for (int nm = 380; nm <= 780; nm += 20) xml += "<SpectralData wavelength=\"" + std::to_string(nm) + "\">1</SpectralData>\n";  // lines 4-24
    xml += "<SpectralData wavelength=\"1e9\">1</SpectralData>\n</SpectralDistribution>\n</IESTM2714>\n";  // line 25
    try {
        (void)parse_tm27_xml(xml, "lamp.xml", "lamp");
        FAIL("no InputError");
    } catch (const InputError& e) {
        CHECK(e.source() == "lamp.xml");
        CHECK(e.line() == 25);
        CHECK(e.problem().find("wavelength 1e+09 nm is outside 100-100000 nm") != std::string::npos);
    }
}

TEST_CASE("TM-27 XML: a 100,000-point file is read with every wavelength, value and error line right") {
    // Element lines are looked up once per element; counting newlines from the start of the file
    // for each one made this size take minutes. 380-780 nm in 0.004 nm steps: 100,001 points.
    const int n = 100001;
    std::string xml = "<?xml version=\"1.0\"?>\n<IESTM2714 xmlns=\"iestm2714\">\n<SpectralDistribution>\n";
    for (int k = 0; k < n; ++k)
        xml += fmt::format("<SpectralData wavelength=\"{:.3f}\">{}</SpectralData>\n", 380.0 + 0.004 * k, 1 + k % 7);
    xml += "</SpectralDistribution>\n</IESTM2714>\n";
    const SpectrumFile f = parse_tm27_xml(xml, "big.xml", "big");
    REQUIRE(f.spectra.size() == 1);
    const auto& s = f.spectra[0];
    REQUIRE(s.wavelengths_nm.size() == static_cast<std::size_t>(n));
    CHECK(s.wavelengths_nm.front() == 380.0);
    CHECK(s.wavelengths_nm[50000] == doctest::Approx(580.0).epsilon(1e-12));
    CHECK(s.wavelengths_nm.back() == doctest::Approx(780.0).epsilon(1e-12));
    CHECK(s.values[0] == 1);
    CHECK(s.values[50000] == 1 + 50000 % 7);
    CHECK(s.values[n - 1] == 1 + (n - 1) % 7);
    // A bad value in the last element is reported on its line (3 header lines + n elements).
    const auto last = xml.rfind("<SpectralData");
    std::string broken = xml;
    broken.replace(broken.find('>', last) + 1, 1, "x");
    try {
        (void)parse_tm27_xml(broken, "big.xml", "big");
        FAIL("no InputError");
    } catch (const InputError& e) {
        CHECK(e.line() == static_cast<std::size_t>(3 + n));
    }
}

TEST_CASE("read_text_file: a FIFO, /dev/zero and a folder are refused with the reason, never read forever") {
    const TempDir tmp("lampwright_special_files");
    const std::string fifo = tmp.file("lamp.csv");
    REQUIRE(::mkfifo(fifo.c_str(), 0600) == 0);
    // No writer ever opens the FIFO: a blocking open would wait forever, so the test would hang.
    try {
        (void)read_spectrum_file(fifo);
        FAIL("no InputError");
    } catch (const InputError& e) {
        CHECK(e.source() == fifo);
        CHECK(e.problem() == "is not a regular file (a FIFO)");
    }
    try {
        (void)read_text_file("/dev/zero");
        FAIL("no InputError");
    } catch (const InputError& e) {
        CHECK(e.source() == "/dev/zero");
        CHECK(e.problem() == "is not a regular file (a character device)");
    }
    try {
        (void)read_text_file(tmp.path.string());
        FAIL("no InputError");
    } catch (const InputError& e) {
        CHECK(e.problem() == "is a folder, not a file");
    }
}

TEST_CASE("read_text_file: a file larger than 512 MiB is refused naming the limit, without reading it") {
    const TempDir tmp("lampwright_big_file");
    const std::string big = tmp.file("huge.csv");
    // A sparse file: 600 MiB long, no disk space used.
    {
        std::ofstream out(big);
    }
    std::filesystem::resize_file(big, std::uintmax_t{600} << 20);
    try {
        (void)read_text_file(big);
        FAIL("no InputError");
    } catch (const InputError& e) {
        CHECK(e.source() == big);
        CHECK(e.problem().find("is larger than 512 MiB (600 MiB)") != std::string::npos);
    }
    // A file of ordinary size is still read whole.
    const std::string small = tmp.write("small.csv", "wavelength_nm,v\n380,1\n");
    CHECK(read_text_file(small) == "wavelength_nm,v\n380,1\n");
}

TEST_CASE("spectrum text: every number form strtod takes is still read the same (plus sign, exponent, hexadecimal, decimal comma, underflow)") {
    // The reader parses with std::from_chars and hands anything it does not take whole to strtod
    // (C11 7.22.1.3): the accepted forms and their values must not depend on the path taken.
    const std::vector<std::pair<std::string, double>> forms{
        {"0.25", 0.25}, {"+0.25", 0.25}, {"2.5e-1", 0.25}, {"2.5E-1", 0.25}, {"0x1p-2", 0.25}, {".25", 0.25}, {"1e-400", std::strtod("1e-400", nullptr)}};
    for (const auto& [text, expected] : forms) {
        CAPTURE(text);
        const auto f = parse("wavelength_nm,v\n" + rows(",", [&](int nm) { return nm == 500 ? text : std::string("1"); }));
        REQUIRE(f.spectra.size() == 1);
        const auto& s = f.spectra[0];
        const auto at = std::find(s.wavelengths_nm.begin(), s.wavelengths_nm.end(), 500.0) - s.wavelengths_nm.begin();
        CHECK(s.values[static_cast<std::size_t>(at)] == expected);
    }
    const auto comma = parse("wavelength_nm;v\n" + rows(";", [](int nm) { return nm == 500 ? std::string("0,25") : std::string("1"); }));
    const auto& s = comma.spectra[0];
    CHECK(s.values[static_cast<std::size_t>(std::find(s.wavelengths_nm.begin(), s.wavelengths_nm.end(), 500.0) - s.wavelengths_nm.begin())] == 0.25);
    // What neither takes is refused as before, with the line and the field.
    const InputError e = parse_error("wavelength_nm,v\n" + rows(",", [](int nm) { return nm == 500 ? std::string("0.2.5") : std::string("1"); }));
    CHECK(e.line() == 8);
    CHECK(std::string(e.what()).find("'0.2.5', not a number") != std::string::npos);
    const InputError inf = parse_error("wavelength_nm,v\n" + rows(",", [](int nm) { return nm == 500 ? std::string("1e999") : std::string("1"); }));
    CHECK(std::string(inf.what()).find("not a finite number") != std::string::npos);
}
