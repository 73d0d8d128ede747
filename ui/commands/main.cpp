// beatless-full — the whole program: parses the command line and runs one command. `beatless` (main_front.cpp) runs
// the file commands itself and hands every other command line to this one (ui/commands/entry.h).
//
// Exit codes (DESIGN.md): 0 success, 1 bad input or runtime failure, 2 bad
// usage. Every failure is one line on stderr naming the file, device or value.
#include "ui/commands/commands.h"
#include "ui/commands/entry.h"

#include <CLI/CLI.hpp>

#include <csignal>
#include <cstdio>

int main(int argc, char** argv) {
    using namespace beatless;
    // Past a file-size limit (ulimit -f) a write fails with EFBIG and is
    // reported, instead of the signal ending the program with a half file.
    std::signal(SIGXFSZ, SIG_IGN);
    CLI::App app{ui::kProgramDescription, "beatless"};
    ui::setup_app(app);

    ui::Runner run;
    ui::register_ratio(app, run);
    ui::register_tone(app, run);
    ui::register_devices(app, run);
    ui::register_listen(app, run);
    // No subcommand: the Practice screen (DESIGN.md), with these options.
    ui::ScreenCommand screen;
    ui::add_screen_options(app, screen);
    ui::add_window_midi_options(app, screen);
    app.add_option("--input", screen.input_device,
                   "Input device: index or a unique part of its name (see beatless devices)");
    app.add_option("--output", screen.output_device, "Output device for the drone: index or a unique part of its name");
    int frames = 0;
    app.add_option("--frames", frames, "Close the window after this many frames (for tests); default: when closed");
    ui::register_snapshot(app, run);
    ui::register_track(app, run);
    ui::register_chord(app, run);
    ui::register_drift(app, run);
    ui::register_history(app, run);
    ui::register_ensemble(app, run);
    ui::register_analyze(app, run);
    ui::register_drill(app, run);
    ui::register_tuning(app, run);

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

    if (!run) run = [&] { return ui::run_screens(screen, frames); };
    return ui::run_guarded(run);
}
