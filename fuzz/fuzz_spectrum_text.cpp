// libFuzzer harness: the delimited-text spectrum reader, then the assessment of each spectrum it
// accepts. Any exception other than lampwright::Error (a clean "bad input"), any sanitizer report,
// a crash or a hang is a defect.
#include "lampwright/colour/assessment.hpp"
#include "lampwright/core/error.hpp"
#include "lampwright/core/interpolation.hpp"
#include "lampwright/io/spectrum_io.hpp"

#include <cstddef>
#include <cstdint>
#include <sstream>
#include <string>

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
    const std::string bytes(reinterpret_cast<const char*>(data), size);
    try {
        std::istringstream in(bytes);
        const auto file = lampwright::parse_spectrum_text(in, "fuzz", "fuzz");
        for (const auto& s : file.spectra) {
            try {
                (void)lampwright::assess(lampwright::resample_to_1nm(s));
            } catch (const lampwright::Error&) {
            }
        }
    } catch (const lampwright::Error&) {
    }
    return 0;
}
