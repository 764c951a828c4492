// Tests of the 'calibrate' command and of recipes that name its calibration file, run as the
// user runs them (LAMPWRIGHT_CLI). Source: issue 12, "lampwright calibrate".
#include "test_support.hpp"

#include <doctest/doctest.h>
#include <nlohmann/json.hpp>

#include <string>

namespace {

using lwtest::run_cli_args;
using lwtest::slurp;
using lwtest::TempDir;

std::string example(const std::string& name) { return std::string(LAMPWRIGHT_SOURCE_DIR) + "/examples/calibration/" + name; }

std::string recipe_naming(const std::string& calibration, const std::string& extra = "") {
    return "name = \"calibrated tube\"\nexcitation_nm = 253.7\ncalibration = \"" + calibration + "\"\n" + extra +
           "[[component]]\nphosphor = \"Y2O3:Eu3+\"\nmass_fraction = 0.43\n"
           "[[component]]\nphosphor = \"LaPO4:Ce3+,Tb3+\"\nmass_fraction = 0.46\n"
           "[[component]]\nphosphor = \"BaMgAl10O17:Eu2+\"\nmass_fraction = 0.11\n";
}

}  // namespace

TEST_CASE("calibrate CLI: the --out file loads through a recipe's calibration key and blend says it used the calibrated model") {
    const TempDir dir;
    const std::string cal = dir.file("line2.toml");
    const auto run = run_cli_args({"calibrate", example("trials.toml"), "--out", cal});
    INFO(run.err);
    REQUIRE(run.exit_code == 0);
    CHECK(run.out.find("LaPO4:Ce3+,Tb3+") != std::string::npos);
    const std::string file = slurp(cal);
    CHECK(file.find("format = \"lampwright calibration 1\"") != std::string::npos);
    CHECK(file.find("# trials (relative L2 residual") != std::string::npos);
    const std::string recipe = dir.write("tube.toml", recipe_naming("line2.toml"));
    const auto blend = run_cli_args({"blend", recipe});
    INFO(blend.err);
    REQUIRE(blend.exit_code == 0);
    CHECK(blend.out.find("calibrated model: " + cal) != std::string::npos);
    const auto json = run_cli_args({"blend", recipe, "--format", "json"});
    REQUIRE(json.exit_code == 0);
    const auto j = nlohmann::json::parse(json.out);
    CHECK(j["calibration"] == cal);
    // The demo data were made with LAP absorbing 0.85 and YOX at d50 4 um (data: 5 um): factor 0.68.
    CHECK(j["components"][1]["absorption"].get<double>() == doctest::Approx(0.68).epsilon(0.02));
    CHECK(j["mercury_line_fraction"].get<double>() == doctest::Approx(0.065).epsilon(0.05));
    // fit prints the same assumptions (blend_assumptions_text), so it says so too.
    const auto fit = run_cli_args({"fit", recipe, "--cct", "4000"});
    INFO(fit.err);
    CHECK(fit.out.find("calibrated model: " + cal) != std::string::npos);
    // An uncalibrated blend says nothing of it, and its JSON field is null.
    const auto plain = run_cli_args({"blend", lwtest::example_recipe("triband_4000K.toml"), "--format", "json"});
    CHECK(nlohmann::json::parse(plain.out)["calibration"].is_null());
}

TEST_CASE("calibrate CLI: the recipe's own absorption and mercury_lines win over the calibration, with a note") {
    const TempDir dir;
    const std::string cal = dir.file("line2.toml");
    REQUIRE(run_cli_args({"calibrate", example("trials.toml"), "--out", cal}).exit_code == 0);
    std::string text = recipe_naming("line2.toml", "mercury_lines = 0.04\n");
    text.replace(text.find("mass_fraction = 0.46"), 20, "mass_fraction = 0.46\nabsorption = 0.9");
    const auto blend = run_cli_args({"blend", dir.write("tube.toml", text), "--format", "json"});
    REQUIRE(blend.exit_code == 0);
    const auto j = nlohmann::json::parse(blend.out);
    CHECK(j["components"][1]["absorption"].get<double>() == doctest::Approx(0.9));
    CHECK(j["mercury_line_fraction"].get<double>() == doctest::Approx(0.04));
    CHECK(blend.err.find("the recipe's absorption = 0.9 is used") != std::string::npos);
    CHECK(blend.err.find("the recipe's mercury_lines = 0.04 is used") != std::string::npos);
}

TEST_CASE("calibrate CLI: --trial RECIPE=SPECTRUM gives the same fit as the manifest, JSON with parameters and sd") {
    const auto run = run_cli_args({"calibrate", "--trial", example("trial1.toml") + "=" + example("trial1.csv"), "--trial",
                                   example("trial2.toml") + "=" + example("trial2.csv"), "--trial",
                                   example("trial3.toml") + "=" + example("trial3.csv"), "--format", "json"});
    INFO(run.err);
    REQUIRE(run.exit_code == 0);
    const auto j = nlohmann::json::parse(run.out);
    CHECK(j["reference"] == "Y2O3:Eu3+");
    CHECK(j["parameters"][0]["name"] == "LaPO4:Ce3+,Tb3+");
    CHECK(j["parameters"][0]["value"].get<double>() == doctest::Approx(0.68).epsilon(0.02));
    CHECK(j["parameters"][0]["sd"].get<double>() > 0);
    CHECK(j["trials"].size() == 3);
}

TEST_CASE("calibrate CLI: a bad manifest is an error naming the file, the line and the key, exit 1") {
    const TempDir dir;
    const std::string m = dir.write("trials.toml", "[[trial]]\nrecipe = \"a.toml\"\nlabel = \"x\"\n");
    const auto run = run_cli_args({"calibrate", m});
    CHECK(run.exit_code == 1);
    CHECK(run.err.find(m + ":1: 'trial[1]': missing key 'spectrum'") != std::string::npos);
    const std::string m2 = dir.write("t2.toml", "[[trial]]\nrecipe = \"a.toml\"\nspectrum = \"a.csv\"\nlable = \"x\"\n");
    const auto run2 = run_cli_args({"calibrate", m2});
    CHECK(run2.exit_code == 1);
    CHECK(run2.err.find(m2 + ":4: 'trial[1].lable': unknown key") != std::string::npos);
}

TEST_CASE("calibrate CLI: a bad calibration file named by a recipe is an error naming that file, the line and the key, exit 1") {
    const TempDir dir;
    std::string cal = slurp(example("line2.toml"));
    const auto at = cal.find("absorption_factor = 0.");
    REQUIRE(at != std::string::npos);
    cal.replace(at, cal.find('\n', at) - at, "absorption_factor = -1");
    const std::string cal_path = dir.write("line2.toml", cal);
    const auto run = run_cli_args({"blend", dir.write("tube.toml", recipe_naming("line2.toml"))});
    CHECK(run.exit_code == 1);
    CHECK(run.err.find(cal_path + ":") != std::string::npos);
    CHECK(run.err.find("'phosphor[2].absorption_factor': must be a factor above 0") != std::string::npos);
    // A missing file: the recipe's key is named.
    const std::string r2 = dir.write("tube2.toml", recipe_naming("nowhere.toml"));
    const auto run2 = run_cli_args({"blend", r2});
    CHECK(run2.exit_code == 1);
    CHECK(run2.err.find(r2 + ":3: 'calibration': cannot read the calibration file") != std::string::npos);
}

TEST_CASE("calibrate CLI: --out over an input (a trial spectrum, the manifest) is refused with exit 2 and the file kept") {
    const TempDir dir;
    const std::string spectrum = dir.write("t1.csv", slurp(example("trial1.csv")));
    const std::string recipe = dir.write("t1.toml", slurp(example("trial1.toml")));
    const std::string manifest = dir.write("m.toml", "[[trial]]\nrecipe = \"t1.toml\"\nspectrum = \"t1.csv\"\n");
    const auto run = run_cli_args({"calibrate", manifest, "--out", spectrum});
    CHECK(run.exit_code == 2);
    CHECK(run.err.find("refusing to overwrite") != std::string::npos);
    CHECK(slurp(spectrum) == slurp(example("trial1.csv")));
    CHECK(run_cli_args({"calibrate", manifest, "--out", manifest}).exit_code == 2);
    CHECK(run_cli_args({"calibrate", "--trial", recipe + "=" + spectrum, "--out", recipe}).exit_code == 2);
}

TEST_CASE("calibrate CLI: qc --recipe with a calibrated recipe says it used the calibrated model, in text and JSON") {
    const std::string spec = std::string(LAMPWRIGHT_SOURCE_DIR) + "/examples/qc/spec_F4100.toml";
    const std::string lot = std::string(LAMPWRIGHT_SOURCE_DIR) + "/examples/qc/lot_A";
    const std::string recipe = example("triband_4000K_line2.toml");
    const auto run = run_cli_args({"qc", spec, lot, "--recipe", recipe});
    CHECK(run.out.find("calibrated model: " + example("line2.toml")) != std::string::npos);
    const auto json = run_cli_args({"qc", spec, lot, "--recipe", recipe, "--format", "json"});
    const auto j = nlohmann::json::parse(json.out);
    CHECK(j["correction"]["calibration"] == example("line2.toml"));
}

TEST_CASE("calibrate CLI: a recipe with an LED pump naming a calibration is refused at its calibration key") {
    const TempDir dir;
    const std::string r = dir.write("led.toml", "name = \"led\"\ncalibration = \"x.toml\"\n[pump]\npeak_nm = 395\nfwhm_nm = 12\n"
                                                "[[component]]\nphosphor = \"BAM\"\nmass_fraction = 1\n");
    const auto run = run_cli_args({"blend", r});
    CHECK(run.exit_code == 1);
    CHECK(run.err.find(r + ":2: 'calibration': a calibration is fitted on mercury discharge lamps") != std::string::npos);
}
