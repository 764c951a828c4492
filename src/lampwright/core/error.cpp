#include "lampwright/core/error.hpp"

#include <fmt/format.h>

namespace lampwright {

namespace {
std::string compose(const std::string& source, std::size_t line, const std::string& problem) {
    if (line == 0) return fmt::format("{}: {}", source, problem);
    return fmt::format("{}:{}: {}", source, line, problem);
}
}  // namespace

InputError::InputError(std::string source, std::size_t line, std::string problem)
    : Error(compose(source, line, problem)),
      source_(std::move(source)),
      line_(line),
      problem_(std::move(problem)) {}

}  // namespace lampwright
