// The beatless subcommands. Each cmd_<name>.cpp registers one subcommand on
// the CLI11 app; its callback stores the action to run in `run`, and main()
// runs it inside one error handler (Error -> exit 1, UsageError -> exit 2).
#pragma once

#include "ui/session/option_parsers.h"
#include "ui/session/usage_error.h"
#include "ui/session/wording.h"

#include <CLI/CLI.hpp>

#include <cstdint>
#include <functional>
#include <initializer_list>
#include <optional>
#include <string>
#include <vector>

namespace beatless::ui {

using Runner = std::function<int()>;

void register_ratio(CLI::App& app, Runner& run);
void register_tone(CLI::App& app, Runner& run);
void register_devices(CLI::App& app, Runner& run);
void register_listen(CLI::App& app, Runner& run);

// The screens (cmd_screen.cpp): `beatless` with no subcommand opens the
// window; `beatless snapshot` renders without one.
struct ScreenCommand {
    bool demo = false;                     // the demo performer replaces the microphone
    std::optional<double> hold_dev_cents;  // --hold: the demo holds the chosen target this far off
    std::uint64_t seed = 7;                // demo performer seed
    int voices = 1;                        // 2: two voices in one input (double stops; --demo: the violinist)
    std::string input_device;              // --input (default: the settings' or the system's)
    std::string output_device;             // --output
    std::string root;                      // --root (default: the settings')
    std::optional<double> a4_hz;           // --a4
    std::string lowest;                    // --lowest (default: the settings')
    std::string target_set;                // --targets
    std::string target;                    // --target: a fixed target
    std::string screen;                    // --screen (default: the last one used)
    bool drone = false;                    // snapshot --drone
    std::string drill;                     // --drill: choose and start this drill on the Drills screen
    std::string listener;                 // --listener: a simulated listener answers ear drills (perfect, guess, cents)
    std::string log_file;                 // --log: the practice log file (snapshot: none unless given)
    bool record = false;                  // --record: record a take into the data folder's takes/ from the start
    std::optional<std::string> midi_out;  // --midi-out (window only): replaces the settings' MIDI port for this run
    std::optional<std::string> midi_tuning;  // --midi-tuning: mts or bend
    std::optional<std::string> midi_in;      // --midi-in: a keyboard that sets the root
    std::string take;                        // --take: the Review screen opens this sound file
    std::optional<int> review_note;          // snapshot --note: the Review screen selects this note (from 1)
    std::optional<double> review_span_s;     // snapshot --span: ... and shows this many seconds around it
};
void add_screen_options(CLI::App& app, ScreenCommand& c);
void add_window_midi_options(CLI::App& app, ScreenCommand& c);  // the window's --midi-out, --midi-tuning, --midi-in
int run_screens(const ScreenCommand& c, int frames);            // frames 0 = until the window is closed
void register_snapshot(CLI::App& app, Runner& run);
void register_track(CLI::App& app, Runner& run);
void register_chord(CLI::App& app, Runner& run);
void register_drift(CLI::App& app, Runner& run);
void register_history(CLI::App& app, Runner& run);
void register_ensemble(CLI::App& app, Runner& run);
void register_analyze(CLI::App& app, Runner& run);
void register_drill(CLI::App& app, Runner& run);
void register_tuning(CLI::App& app, Runner& run);

// Output format choice shared by the commands.
enum class Format { text, json, csv };
void add_format_option(CLI::App& sub, Format& format, bool with_csv = true);
void add_format_option(CLI::App& sub, Format& format, std::initializer_list<Format> allowed);
// --a4 HZ: the A4 reference for note names (checked where it is used: 400-480).
void add_a4_option(CLI::App& sub, double& a4_hz);

// Small text helpers shared by the commands.
std::string join_args(const std::vector<std::string>& args);  // words joined by single spaces
inline constexpr const char* kLowestHelp =
    "Lowest note to track live: a note (A1) or Hz, 30-200 (default 60, a cello's C; 55 for a bass voice, 38 for double "
    "bass; notes under 70 Hz settle more slowly)";

// A root as the user typed it: "Bb3 = 233.082 Hz" for a note (its spelling
// kept, never A#3), "146.8 Hz" for a number of Hz.
std::string root_echo(std::string_view typed, double root_hz);

// The hearing caution on stderr, once per user (a marker file in the config folder).
void hearing_caution_once();

}  // namespace beatless::ui
