#include "tests/cli.h"

#include <fcntl.h>
#include <poll.h>
#include <sys/wait.h>
#include <unistd.h>
#include <cerrno>
#include <cstdio>
#include <cstdlib>
#include <cmath>
#include <cstring>
#include <filesystem>
#include <sstream>
#include <stdexcept>

extern char** environ;

namespace beatless::test {

std::string program_path() { return BEATLESS_PROGRAM; }

RunResult run_program(const std::vector<std::string>& args, const std::vector<std::string>& env) {
    return run_program_at(program_path(), args, env);
}

RunResult run_program_at(const std::string& prog, const std::vector<std::string>& args,
                         const std::vector<std::string>& env) {
    int out_pipe[2], err_pipe[2];
    if (pipe(out_pipe) != 0 || pipe(err_pipe) != 0) throw std::runtime_error("pipe failed");
    std::vector<std::string> envs;
    for (char** e = environ; *e; ++e) envs.emplace_back(*e);
    for (const auto& kv : env) {
        const std::string name = kv.substr(0, kv.find('=') + 1);
        std::erase_if(envs, [&](const std::string& x) { return x.rfind(name, 0) == 0; });
        envs.push_back(kv);
    }
    std::vector<char*> argv{const_cast<char*>(prog.c_str())};
    for (const auto& a : args) argv.push_back(const_cast<char*>(a.c_str()));
    argv.push_back(nullptr);
    std::vector<char*> envp;
    for (auto& e : envs) envp.push_back(e.data());
    envp.push_back(nullptr);

    const pid_t pid = fork();
    if (pid < 0) throw std::runtime_error("fork failed");
    if (pid == 0) {
        const int devnull = open("/dev/null", O_RDONLY);
        dup2(devnull, 0);
        dup2(out_pipe[1], 1);
        dup2(err_pipe[1], 2);
        close(out_pipe[0]);
        close(err_pipe[0]);
        execve(prog.c_str(), argv.data(), envp.data());
        _exit(127);
    }
    close(out_pipe[1]);
    close(err_pipe[1]);
    RunResult r;
    pollfd fds[2] = {{out_pipe[0], POLLIN, 0}, {err_pipe[0], POLLIN, 0}};
    int open_fds = 2;
    char buf[65536];
    while (open_fds > 0) {
        if (poll(fds, 2, -1) < 0) {
            if (errno == EINTR) continue;
            break;
        }
        for (int i = 0; i < 2; ++i) {
            if (fds[i].fd < 0 || !(fds[i].revents & (POLLIN | POLLHUP | POLLERR))) continue;
            const ssize_t n = read(fds[i].fd, buf, sizeof buf);
            if (n <= 0) {
                close(fds[i].fd);
                fds[i].fd = -1;
                --open_fds;
            } else {
                (i == 0 ? r.out : r.err).append(buf, static_cast<std::size_t>(n));
            }
        }
    }
    int status = 0;
    waitpid(pid, &status, 0);
    r.exit_code = WIFEXITED(status) ? WEXITSTATUS(status) : 128 + WTERMSIG(status);
    return r;
}

RunResult run_program(const std::string& args_line, const std::vector<std::string>& env) {
    return run_program(split_args(args_line), env);
}

std::vector<std::string> split_args(const std::string& args_line) {
    std::vector<std::string> args;
    std::string cur;
    bool in_arg = false;
    char quote = 0;
    for (const char c : args_line) {
        if (quote) {
            if (c == quote)
                quote = 0;
            else
                cur += c;
        } else if (c == '\'' || c == '"') {
            quote = c;
            in_arg = true;
        } else if (c == ' ') {
            if (in_arg) args.push_back(cur);
            cur.clear();
            in_arg = false;
        } else {
            cur += c;
            in_arg = true;
        }
    }
    if (in_arg) args.push_back(cur);
    return args;
}

std::vector<double> json_numbers(const std::string& json, const std::string& list_expr) {
    std::istringstream in(json_value(json, "' '.join(str(v) for v in " + list_expr + ")"));
    std::vector<double> out;
    for (std::string w; in >> w;) out.push_back(w == "None" ? NAN : std::stod(w));
    return out;
}

std::vector<std::string> json_words(const std::string& json, const std::string& list_expr) {
    std::istringstream in(json_value(json, "' '.join(str(v) for v in " + list_expr + ")"));
    std::vector<std::string> out;
    for (std::string w; in >> w;) out.push_back(w);
    return out;
}

std::string json_value(const std::string& json, const std::string& expr) {
    TempDir dir;
    const std::string in_path = dir.file("doc.json");
    {
        std::FILE* f = std::fopen(in_path.c_str(), "w");
        if (!f) throw std::runtime_error("cannot write " + in_path);
        std::fwrite(json.data(), 1, json.size(), f);
        std::fclose(f);
    }
    int out_pipe[2];
    if (pipe(out_pipe) != 0) throw std::runtime_error("pipe failed");
    const pid_t pid = fork();
    if (pid == 0) {
        dup2(out_pipe[1], 1);
        dup2(out_pipe[1], 2);
        close(out_pipe[0]);
        execl("/usr/bin/python3", "python3", "-c",
              "import json,sys; d=json.load(open(sys.argv[1])); print(eval(sys.argv[2]))", in_path.c_str(),
              expr.c_str(), static_cast<char*>(nullptr));
        _exit(127);
    }
    close(out_pipe[1]);
    std::string out;
    char buf[4096];
    for (ssize_t n; (n = read(out_pipe[0], buf, sizeof buf)) > 0;) out.append(buf, static_cast<std::size_t>(n));
    close(out_pipe[0]);
    int status = 0;
    waitpid(pid, &status, 0);
    while (!out.empty() && out.back() == '\n') out.pop_back();
    return out;
}

std::string python_output(const std::string& script) {
    TempDir d;
    const std::string py = d.file("s.py");
    {
        std::FILE* f = std::fopen(py.c_str(), "w");
        if (!f) throw std::runtime_error("cannot write " + py);
        std::fwrite(script.data(), 1, script.size(), f);
        std::fclose(f);
    }
    std::FILE* p = ::popen(("/usr/bin/python3 " + py).c_str(), "r");
    if (!p) throw std::runtime_error("cannot run /usr/bin/python3");
    std::string out;
    char buf[4096];
    while (std::fgets(buf, sizeof buf, p)) out += buf;
    if (::pclose(p) != 0) throw std::runtime_error("/usr/bin/python3 failed on " + py);
    while (!out.empty() && out.back() == '\n') out.pop_back();
    return out;
}

TempDir::TempDir() {
    std::string tmpl = (std::filesystem::temp_directory_path() / "beatless-test-XXXXXX").string();
    if (!mkdtemp(tmpl.data())) throw std::runtime_error("mkdtemp failed");
    path_ = tmpl;
}

TempDir::~TempDir() {
    std::error_code ec;
    std::filesystem::remove_all(path_, ec);
}

int line_count(const std::string& s) {
    int n = 0;
    for (char c : s) n += c == '\n';
    if (!s.empty() && s.back() != '\n') ++n;
    return n;
}

}  // namespace beatless::test
