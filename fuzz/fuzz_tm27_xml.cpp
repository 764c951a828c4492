// libFuzzer harness: the IES TM-27-14 spectral XML reader. Any exception other than
// lampwright::Error, any sanitizer report, a crash or a hang is a defect.
#include "lampwright/core/error.hpp"
#include "lampwright/io/spectrum_io.hpp"

#include <cstddef>
#include <cstdint>
#include <string>

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
    const std::string bytes(reinterpret_cast<const char*>(data), size);
    try {
        (void)lampwright::parse_tm27_xml(bytes, "fuzz", "fuzz");
    } catch (const lampwright::Error&) {
    }
    return 0;
}
