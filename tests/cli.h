// Runs the beatless program in a child process and captures what it prints.
// Used by the command-line tests (exit codes and one-line messages).
#pragma once

#include <string>
#include <utility>
#include <vector>

namespace beatless::test {

struct RunResult {
    int exit_code = -1;  // exit status, or 128 + signal number when killed
    std::string out;     // stdout
    std::string err;     // stderr
};

// argv excludes the program; env entries "NAME=value" are added to the
// current environment. stdin is /dev/null.
RunResult run_program(const std::vector<std::string>& args, const std::vector<std::string>& env = {});

// Same, with the arguments in one line split at spaces; '...' and "..."
// quote an argument that contains spaces.
RunResult run_program(const std::string& args_line, const std::vector<std::string>& env = {});

// Same, running another program (the whole program beside the front one, tests/test_front.cpp).
RunResult run_program_at(const std::string& program, const std::vector<std::string>& args,
                         const std::vector<std::string>& env = {});
// A line split as run_program(args_line) splits it.
std::vector<std::string> split_args(const std::string& args_line);

// One value out of a JSON text, read by Python's json module (an outside
// parser, /usr/bin/python3) and printed by str(): expr is a Python
// expression on the parsed document `d`, e.g. "d['voices'][1]['note']".
std::string json_value(const std::string& json, const std::string& expr);

// The items of a Python list expression on `d` (json_value), as numbers (None is NaN) or as words.
std::vector<double> json_numbers(const std::string& json, const std::string& list_expr);
std::vector<std::string> json_words(const std::string& json, const std::string& list_expr);

// What /usr/bin/python3 prints running `script` (trailing newlines removed); throws std::runtime_error when it fails.
std::string python_output(const std::string& script);

// Path of the beatless binary under test (BEATLESS_PROGRAM from CMake).
std::string program_path();

// A fresh temporary directory, removed by the destructor.
class TempDir {
public:
    TempDir();
    ~TempDir();
    TempDir(const TempDir&) = delete;
    TempDir& operator=(const TempDir&) = delete;
    const std::string& path() const { return path_; }
    std::string file(const std::string& name) const { return path_ + "/" + name; }

private:
    std::string path_;
};

// Number of lines in s (a trailing newline does not start a new line).
int line_count(const std::string& s);

}  // namespace beatless::test
