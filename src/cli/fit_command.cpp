// lampwright fit: solve a recipe's mass fractions for a target white.
#include "cli_common.hpp"

namespace lampwright::cli {

int run_fit(int, char**) { throw UsageError{"fit: not available yet in this build"}; }

}  // namespace lampwright::cli
