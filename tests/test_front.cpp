// The front program (`beatless`, ui/commands/main_front.cpp) against the whole program (`beatless-full`,
// main.cpp) it stands in front of: the reference for every check here is the whole program's own answer to the
// same command line (what `beatless` printed before the split), and the loader's list of what it loads
// (LD_TRACE_LOADED_OBJECTS, glibc's ld.so(8)).
#include "audio/soundfile.h"
#include "tests/cli.h"
#include "tests/signals.h"
#include "ui/commands/entry.h"

#include <doctest/doctest.h>

#include <algorithm>
#include <regex>
#include <set>
#include <string>

using namespace beatless;

namespace {

std::string whole_program() {
    const std::string front = test::program_path();
    return front.substr(0, front.find_last_of('/') + 1) + "beatless-full";
}

// The libraries the loader maps for a program (ld.so(8): LD_TRACE_LOADED_OBJECTS lists them and runs nothing).
std::string loaded_objects(const std::string& program) {
    return test::run_program_at(program, {}, {"LD_TRACE_LOADED_OBJECTS=1"}).out;
}

}  // namespace

TEST_CASE("front: every command line prints, and exits, as the whole program does") {
    test::TempDir dir;
    const std::string wav = dir.file("tone.wav");
    const auto parts = test::falling_partials(220.0, 44100.0, 10, 6.0, 3);
    audio::write_wav(wav, test::harmonic_tone(44100.0, 22050, 220.0, parts), 44100.0, audio::SampleFormat::pcm16);
    const std::vector<std::string> env = {"BEATLESS_HOME=" + dir.path()};
    const std::string lines[] = {// handed on: help, version, the live and window commands, unknown words
                                 "--help", "--version", "listen --help", "devices --help", "snapshot --help",
                                 "drill --help", "nosuch", "--demo --frames x",
                                 // run by the front: results, help texts and every kind of error
                                 "ratio 7/5", "ratio 7/5 --format json", "ratio 7/0", "ratio", "ratio 7/5 --bogus",
                                 "ratio --help", "track --help", "track", "track " + wav + " --format csv",
                                 "track " + wav + " --hop-ms 0", "track /nonexistent/take.wav",
                                 "track " + wav + " listen", "track " + wav + " --demo", "track " + wav + " ratio",
                                 "analyze --help", "analyze " + wav + " --format json", "chord --help", "drift --help",
                                 "tuning --help", "tone --help", "history --help", "history --format json",
                                 "ratio 3/2 --version"};
    for (const std::string& line : lines) {
        const auto args = test::split_args(line);
        const test::RunResult front = test::run_program_at(test::program_path(), args, env);
        const test::RunResult whole = test::run_program_at(whole_program(), args, env);
        INFO("beatless " << line);
        CHECK(front.exit_code == whole.exit_code);
        CHECK(front.out == whole.out);
        CHECK(front.err == whole.err);
    }
}

TEST_CASE("front: it names exactly the whole program's subcommands (its own and the ones it hands on)") {
    const test::RunResult help = test::run_program_at(whole_program(), {"--help"});
    REQUIRE(help.exit_code == 0);
    const auto at = help.out.find("Subcommands:");
    REQUIRE(at != std::string::npos);
    std::set<std::string> whole;
    const std::string rest = help.out.substr(at);
    const std::regex row("\n  (\\w+) {2,}");
    for (auto it = std::sregex_iterator(rest.begin(), rest.end(), row); it != std::sregex_iterator(); ++it)
        whole.insert((*it)[1]);
    CHECK(whole.size() >= 10);

    CLI::App app;
    ui::Runner run;
    ui::register_file_commands(app, run);
    std::set<std::string> front;
    for (const CLI::App* sub : app.get_subcommands({})) front.insert(sub->get_name());
    CHECK(front == std::set<std::string>(ui::kFileCommands.begin(), ui::kFileCommands.end()));
    for (const char* name : ui::kWholeProgramCommands) CHECK(front.insert(name).second);
    CHECK(front == whole);
}

TEST_CASE("front: a file command loads none of the sound-system, MIDI and window libraries") {
    const std::string front = loaded_objects(test::program_path());
    const std::string whole = loaded_objects(whole_program());
    REQUIRE(front.find("libsndfile") != std::string::npos);  // the list is read: the file library is in it
    for (const char* lib : {"libportaudio", "libpulse", "libjack", "librtmidi", "libasound", "libglfw", "libX11",
                            "libOpenGL", "libdbus"}) {
        INFO(lib);
        CHECK(front.find(lib) == std::string::npos);
        CHECK(whole.find(lib) != std::string::npos);  // ... which the whole program does load
    }
}
