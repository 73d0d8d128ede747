// beatless — the program users run. It runs the file commands (entry.h: ratio, tone, track, chord, drift, history,
// analyze, tuning) itself, linked only against the libraries they use, and hands every other command line, unchanged
// and before anything is printed, to the whole program (main.cpp, lib/beatless/beatless-full): the window, the live
// commands, --help and --version, and any line the file commands cannot parse, so the whole program's words and
// exit codes answer it. Loading the sound-system, MIDI and window libraries costs about 10 ms of CPU at every start
// (beatless-bench tracker: `track` end to end); the file commands no longer pay it.
#include "ui/commands/commands.h"
#include "ui/commands/entry.h"

#include <CLI/CLI.hpp>

#include <unistd.h>

#include <algorithm>
#include <cerrno>
#include <climits>
#include <csignal>
#include <cstdio>
#include <cstring>
#include <string>

namespace {

// Replaces this process with the whole program: installed at BEATLESS_FULL_FROM_BIN beside the bin folder, or in
// the same folder (the build folder). Returns only when it cannot (exit code 1, one line naming the file).
int run_whole_program(char** argv) {
    char self[PATH_MAX];
    const ssize_t n = readlink("/proc/self/exe", self, sizeof self - 1);
    std::string dir = ".";
    if (n > 0) {
        self[n] = '\0';
        dir = self;
        dir.erase(dir.find_last_of('/') == std::string::npos ? 0 : dir.find_last_of('/'));
    }
    const std::string installed = dir + "/" BEATLESS_FULL_FROM_BIN "/beatless-full";
    const std::string beside = dir + "/beatless-full";
    const std::string& path = access(installed.c_str(), X_OK) == 0 ? installed : beside;
    execv(path.c_str(), argv);
    std::fprintf(stderr, "beatless: cannot run the whole program %s: %s\n", path.c_str(), std::strerror(errno));
    return 1;
}

}  // namespace

int main(int argc, char** argv) {
    using namespace beatless;
    // A line that does not start with a file command (the window, --help, --version, a live command) goes on
    // before anything is set up here.
    if (argc < 2 || std::none_of(ui::kFileCommands.begin(), ui::kFileCommands.end(),
                                 [&](const char* name) { return std::strcmp(argv[1], name) == 0; }))
        return run_whole_program(argv);
    std::signal(SIGXFSZ, SIG_IGN);  // as the whole program: a file-size limit is an error, not a half file
    CLI::App app{ui::kProgramDescription, "beatless"};
    ui::setup_app(app);
    ui::Runner run;
    ui::register_file_commands(app, run);
    // The whole program's other subcommands, by name only, so that a line naming one parses here as it does there.
    for (const char* name : ui::kWholeProgramCommands) app.add_subcommand(name)->prefix_command();
    try {
        app.parse(argc, argv);
    } catch (const CLI::ParseError&) {
        return run_whole_program(argv);  // help, version, or an error the whole program words
    }
    if (!run) return run_whole_program(argv);  // the window, or a command only the whole program has
    return ui::run_guarded(run);
}
