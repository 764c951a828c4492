// Numeric command-line options of every command: a value that is not a finite number, or lies
// outside the option's physical range, is a usage error (exit 2) naming the option, its accepted
// range and its unit; the help text states the same range (src/cli/cli_common.hpp, NumberRange).
#include "test_support.hpp"

#include <doctest/doctest.h>

#include <string>
#include <vector>

namespace {

using lwtest::example_recipe;
using lwtest::quote;
using lwtest::run_cli;

// The help as one line: Boost wraps long descriptions, so a phrase may span lines.
std::string one_line(const std::string& text) {
    std::string out;
    for (char c : text) {
        const bool blank = c == ' ' || c == '\n' || c == '\t';
        if (blank && !out.empty() && out.back() == ' ') continue;
        out += blank ? ' ' : c;
    }
    return out;
}

struct BadOption {
    const char* args;     // after "fit RECIPE"
    const char* option;   // named in the message
    const char* must_say; // the range or unit the message must give
};

}  // namespace

TEST_CASE("cli options: fit refuses non-finite and out-of-range numbers with exit 2, the option, its range and its unit") {
    const std::string recipe = quote(example_recipe("triband_4000K.toml"));
    const BadOption cases[] = {
        // Percent typed for a fraction: the message must say the sigma is a fraction.
        {"--cct 4000 --tolerance-run --qe-sigma 5", "--qe-sigma", "0.01 = 1 %"},
        {"--cct 4000 --tolerance-run --weighing-sigma 1e308", "--weighing-sigma", "0.005 = 0.5 %"},
        {"--cct 4000 --tolerance-run --peak-sigma 50", "--peak-sigma", "nm"},
        {"--cct 4000 --tolerance-run --qe-sigma nan", "--qe-sigma", "0.01 = 1 %"},
        {"--cct 4000 --tolerance inf", "--tolerance", "delta u'v'"},
        {"--cct 4000 --tolerance nan", "--tolerance", "delta u'v'"},
        {"--flamp F4100 --steps 1e308", "--steps", "MacAdam steps"},
        {"--flamp F4100 --steps nan", "--steps", "MacAdam steps"},
        {"--cct 4000 --maximize ra-r9 --r9-weight nan", "--r9-weight", "from 0 to 1"},
        {"--cct 4000 --maximize ra-r9 --r9-weight 2", "--r9-weight", "from 0 to 1"},
        {"--cct 4000 --min-ra nan", "--min-ra", "Ra"},
        {"--cct 4000 --min-ra 180", "--min-ra", "Ra"},
        {"--cct 4000 --min-r9 -inf", "--min-r9", "R9"},
        {"--cct 4000 --min-ler 900", "--min-ler", "lm/W"},
        {"--cct inf", "--cct", "K"},
        {"--cct 4000 --duv nan", "--duv", "Duv"},
        {"--cct 4000 --duv 0.2", "--duv", "Duv"},
        {"--xy nan,0.38", "--xy", "x"},
        {"--uv 0.22,inf", "--uv", "v'"},
        {"--cct 4000 --tolerance-run --qe-sigma 0.01 --draws 1e308", "--draws", "whole number"},
        {"--cct 4000 --tolerance-run --qe-sigma 0.01 --draws 2.5", "--draws", "whole number"},
        {"--cct 4000 --tolerance-run --qe-sigma 0.01 --seed -1", "--seed", "whole number"},
        {"--cct 4000 --front ra-ler --points nan", "--points", "whole number"},
        {"--cct 4000 --choose 1e9", "--choose", "components"},
        {"--ansi nan", "--ansi", "K"},
    };
    for (const auto& c : cases) {
        const std::string args = c.args;
        CAPTURE(args);
        const auto r = run_cli("fit " + recipe + " " + args);
        CHECK_FALSE(r.crashed);
        CHECK(r.exit_code == 2);
        CHECK(r.err.find(c.option) != std::string::npos);
        CHECK(r.err.find(c.must_say) != std::string::npos);
        CHECK(r.out.empty());  // nothing was computed or printed
        CAPTURE(r.err);
    }
    // The message for the percent typed as a fraction quotes the value and calls it a fraction.
    const auto qe = run_cli("fit " + recipe + " --cct 4000 --tolerance-run --qe-sigma 5");
    CHECK(qe.err.find("fraction") != std::string::npos);
    CHECK(qe.err.find("'5'") != std::string::npos);
}

TEST_CASE("cli options: values inside the ranges are still accepted") {
    const std::string recipe = quote(example_recipe("triband_4000K.toml"));
    for (const char* args : {"--cct 4000 --tolerance 0.001 --maximize ra-r9 --r9-weight 0.3", "--cct 4000 --duv -0.002 --min-ra 70",
                             "--flamp F4100 --steps 7", "--xy 0.3805,0.3768", "--uv 0.2230,0.4970", "--ansi 4000",
                             "--cct 4000 --tolerance-run --draws 500 --qe-sigma 0.5 --weighing-sigma 0.01 --peak-sigma +0.5 --seed 4294967295"}) {
        const std::string a = args;
        CAPTURE(a);
        const auto r = run_cli("fit " + recipe + " " + a);
        CAPTURE(r.err);
        CHECK(r.exit_code == 0);
    }
}

TEST_CASE("cli options: qc --threads must be a whole number of threads in range") {
    const std::string spec = quote(std::string(LAMPWRIGHT_SOURCE_DIR) + "/examples/qc/spec_F4100.toml");
    const std::string lot = quote(std::string(LAMPWRIGHT_SOURCE_DIR) + "/examples/qc/lot_A");
    for (const char* v : {"nan", "0", "-1", "1e308", "2.5", "2000000"}) {
        const std::string value = v;
        CAPTURE(value);
        const auto r = run_cli("qc " + spec + " " + lot + " --threads " + value);
        CHECK(r.exit_code == 2);
        CHECK(r.err.find("--threads") != std::string::npos);
        CHECK(r.err.find("threads") != std::string::npos);
        CHECK(r.err.find("whole number from 1 to") != std::string::npos);
    }
}

TEST_CASE("cli options: the help text of every numeric option states its accepted range") {
    const auto fit = run_cli("fit --help");
    REQUIRE(fit.exit_code == 0);
    const std::string fit_help = one_line(fit.out);
    for (const char* s : {"1000 to 25000 K", "-0.05 to 0.05 Duv", "above 0 up to 20 MacAdam steps", "above 0 up to 0.05 delta u'v'",
                          "-100 to 100 Ra", "0 to 683 lm/W", "0 to 20 nm", "0.01 = 1 %", "whole number from 1 to 100000000"}) {
        const std::string text = s;
        CAPTURE(text);
        CHECK(fit_help.find(text) != std::string::npos);
    }
    const auto qc = run_cli("qc --help");
    REQUIRE(qc.exit_code == 0);
    CHECK(one_line(qc.out).find("whole number from 1 to 1000000 threads") != std::string::npos);
}
