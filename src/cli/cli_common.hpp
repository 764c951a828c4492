#pragma once
// Shared pieces of the command-line front end: exit codes, output formats, messages.
#include <iosfwd>
#include <string>

namespace lampwright::cli {

// Exit codes every command uses.
inline constexpr int kExitOk = 0;
inline constexpr int kExitBadInput = 1;  // some input was bad; every good one was still reported
inline constexpr int kExitUsage = 2;     // the command line itself is wrong

enum class Format { text, csv, json };
Format parse_format(const std::string& s);  // throws UsageError

struct UsageError {
    std::string message;
};

void print_error(const std::string& message);
void print_warning(const std::string& message);

int run_assess(int argc, char** argv);

}  // namespace lampwright::cli
