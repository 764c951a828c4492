#pragma once
// The library's version (CMakeLists.txt project VERSION), printed by --version and written into
// reports, SVG files and recorded lots so a result can be traced to the code that made it.

namespace lampwright {

#ifndef LAMPWRIGHT_VERSION
#error "LAMPWRIGHT_VERSION is set by CMakeLists.txt"
#endif
inline constexpr const char* kVersion = LAMPWRIGHT_VERSION;

}  // namespace lampwright
