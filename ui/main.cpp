// beatless — entry point: parses the command line and runs one command.
//
// Exit codes (DESIGN.md): 0 success, 1 bad input or runtime failure, 2 bad
// usage. Every failure is one line on stderr naming the file, device or value.
#include "pitch/error.h"
#include "ui/commands.h"

#include <CLI/CLI.hpp>

#include <cstdio>
#include <exception>
#include <map>

namespace beatless::ui {

void add_format_option(CLI::App& sub, Format& format, std::initializer_list<Format> allowed) {
    std::map<std::string, Format> names;
    std::string help = "Output form:";
    for (Format f : allowed) {
        const char* n = f == Format::text ? "text" : f == Format::json ? "json" : "csv";
        names.emplace(n, f);
        help += std::string(" ") + n;
    }
    sub.add_option("--format", format, help)->transform(CLI::CheckedTransformer(names, CLI::ignore_case).description(""));
}

void add_format_option(CLI::App& sub, Format& format, bool with_csv) {
    if (with_csv) add_format_option(sub, format, {Format::text, Format::json, Format::csv});
    else add_format_option(sub, format, {Format::text, Format::json});
}

std::string ordinal(int n) {
    const int m100 = n % 100;
    const char* suffix = (m100 >= 11 && m100 <= 13) ? "th" : n % 10 == 1 ? "st" : n % 10 == 2 ? "nd" : n % 10 == 3 ? "rd" : "th";
    return std::to_string(n) + suffix;
}

std::string join_args(const std::vector<std::string>& args) {
    std::string s;
    for (const auto& a : args) {
        if (!s.empty()) s += ' ';
        s += a;
    }
    return s;
}

}  // namespace beatless::ui

int main(int argc, char** argv) {
    using namespace beatless;
    CLI::App app{"Beatless: hear how far you are from a just interval, in cents and beats per second.", "beatless"};
    app.set_version_flag("--version", "beatless 0.1.0");
    app.require_subcommand(0, 1);

    ui::Runner run;
    ui::register_ratio(app, run);
    ui::register_tone(app, run);
    ui::register_track(app, run);
    ui::register_chord(app, run);
    ui::register_drift(app, run);
    ui::register_history(app, run);
    ui::register_analyze(app, run);

    try {
        app.parse(argc, argv);
    } catch (const CLI::ParseError& e) {
        if (e.get_exit_code() == 0) return app.exit(e);  // --help, --version
        std::string msg = e.what();
        for (char& c : msg)
            if (c == '\n') c = ' ';
        std::fprintf(stderr, "beatless: %s (try beatless --help)\n", msg.c_str());
        return 2;
    }

    try {
        if (!run) {
            std::fputs(app.help().c_str(), stdout);
            return 0;
        }
        return run();
    } catch (const UsageError& e) {
        std::fprintf(stderr, "beatless: %s\n", e.what());
        return 2;
    } catch (const Error& e) {
        std::fprintf(stderr, "beatless: %s\n", e.what());
        return 1;
    } catch (const std::exception& e) {
        std::fprintf(stderr, "beatless: unexpected failure: %s\n", e.what());
        return 1;
    }
}
