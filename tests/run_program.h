// Runs the beatless program for command-line tests (internal to tests/).
//
// run_program("chord 4:5:6 --root C3") runs BEATLESS_PROGRAM (defined by
// beatless_add_test) through the shell and returns its exit code, stdout and
// stderr. json_value reads one value out of a JSON text with Python's json
// module (/usr/bin/python3), an outside parser, given a Python expression on
// the parsed document `d`, e.g. "d['voices'][1]['note']".
#pragma once

#include <sys/wait.h>

#include <cstdio>
#include <cstdlib>
#include <fstream>
#include <sstream>
#include <string>
#include <unistd.h>

namespace beatless::test {

struct RunResult {
    int exit_code = -1;
    std::string out;
    std::string err;
};

inline std::string read_all(FILE* f) {
    std::string s;
    char buf[4096];
    std::size_t n = 0;
    while ((n = std::fread(buf, 1, sizeof buf, f)) > 0) s.append(buf, n);
    return s;
}

inline std::string temp_path(const char* stem) {
    return std::string("beatless_test_") + stem + "_" + std::to_string(::getpid()) + ".txt";
}

inline RunResult run_program(const std::string& args) {
    RunResult r;
    const std::string err_path = temp_path("stderr");
    const std::string cmd = std::string("'") + BEATLESS_PROGRAM + "' " + args + " 2>" + err_path;
    FILE* p = ::popen(cmd.c_str(), "r");
    if (!p) return r;
    r.out = read_all(p);
    const int status = ::pclose(p);
    r.exit_code = WIFEXITED(status) ? WEXITSTATUS(status) : -1;
    std::ifstream e(err_path);
    std::ostringstream ss;
    ss << e.rdbuf();
    r.err = ss.str();
    std::remove(err_path.c_str());
    return r;
}

inline std::string json_value(const std::string& json, const std::string& expr) {
    const std::string in_path = temp_path("json");
    {
        std::ofstream f(in_path);
        f << json;
    }
    const std::string cmd = "/usr/bin/python3 -c 'import json,sys; d=json.load(open(sys.argv[1])); print(eval(sys.argv[2]))' " +
                            in_path + " \"" + expr + "\" 2>&1";
    FILE* p = ::popen(cmd.c_str(), "r");
    std::string out = p ? read_all(p) : "";
    if (p) ::pclose(p);
    std::remove(in_path.c_str());
    while (!out.empty() && out.back() == '\n') out.pop_back();
    return out;
}

}  // namespace beatless::test
