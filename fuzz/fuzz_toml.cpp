// libFuzzer harness: every TOML reader (recipe, LED layer design, layer calibration, phosphor
// file, QC specification) on the same bytes. Any exception other than lampwright::Error, any sanitizer
// report, a crash or a hang is a defect.
#include "lampwright/core/error.hpp"
#include "lampwright/io/toml_access.hpp"
#include "lampwright/led/layer_calibration.hpp"
#include "lampwright/led/layer_design.hpp"
#include "lampwright/phosphor/phosphor.hpp"
#include "lampwright/phosphor/recipe.hpp"
#include "lampwright/production/qc.hpp"

#include <cstddef>
#include <cstdint>
#include <fstream>
#include <string>

#include <unistd.h>

namespace {

template <class Work>
void expecting_only_input_errors(Work&& work) {
    try {
        work();
    } catch (const lampwright::Error&) {
    }
}

// The QC specification is read from a file only, so the bytes go through one per process.
const std::string& spec_path() {
    static const std::string path = "/tmp/lampwright_fuzz_spec_" + std::to_string(::getpid()) + ".toml";
    return path;
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
    const std::string text(reinterpret_cast<const char*>(data), size);
    expecting_only_input_errors([&] {
        const lampwright::TomlDoc doc(text, "fuzz");
        expecting_only_input_errors([&] {
            if (lampwright::is_layer_design(doc)) (void)lampwright::layer_design_from_toml(doc);
        });
        expecting_only_input_errors([&] { (void)lampwright::recipe_from_toml(doc, {}); });
        expecting_only_input_errors([&] { (void)lampwright::layer_calibration_from_toml(doc); });
    });
    expecting_only_input_errors([&] { (void)lampwright::parse_phosphor(text, "fuzz"); });
    expecting_only_input_errors([&] {
        std::ofstream(spec_path(), std::ios::binary | std::ios::trunc) << text;
        (void)lampwright::load_qc_spec(spec_path());
    });
    return 0;
}
