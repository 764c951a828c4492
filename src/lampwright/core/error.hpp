#pragma once
// Errors that name what is wrong: the file, the line where there is one, and the problem.
#include <stdexcept>
#include <string>

namespace lampwright {

class Error : public std::runtime_error {
public:
    using std::runtime_error::runtime_error;
};

// Bad input: a file (or recipe key) the user gave us, with the line when it is known (0 = none).
class InputError : public Error {
public:
    InputError(std::string source, std::size_t line, std::string problem);
    const std::string& source() const { return source_; }
    std::size_t line() const { return line_; }
    const std::string& problem() const { return problem_; }

private:
    std::string source_;
    std::size_t line_;
    std::string problem_;
};

}  // namespace lampwright
