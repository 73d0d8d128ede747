// What both beatless programs share (DEVELOPERS.md, "Process start"): the app's description and version, the list
// of subcommands only the whole program runs, and the one error handler around a command.
//
// `beatless` (main_front.cpp) runs the file commands itself and hands every other command line, unchanged, to the
// whole program (main.cpp, installed as lib/beatless/beatless-full), so a file command never loads the audio,
// MIDI and window libraries. Thread: main.
#pragma once

#include "ui/commands/commands.h"

#include <CLI/CLI.hpp>

#include <array>

namespace beatless::ui {

inline constexpr const char* kProgramDescription =
    "Beatless: hear how far you are from a just interval, in cents and beats per second.";

// The subcommands that need the sound system, MIDI or the window: only the whole program has them. The front
// program knows their names so that a command line naming one is handed on (tests/test_front.cpp checks this
// list against the whole program's subcommands).
inline constexpr std::array<const char*, 5> kWholeProgramCommands = {"devices", "listen", "snapshot", "ensemble",
                                                                     "drill"};

// The file commands: the front program runs a line whose first word is one of these, and hands any other line on
// before parsing it (register_file_commands registers exactly these; tests/test_front.cpp checks it).
inline constexpr std::array<const char*, 8> kFileCommands = {"ratio", "tone",    "track",   "chord",
                                                             "drift", "history", "analyze", "tuning"};

// The version flag and "at most one subcommand", as both programs set them.
void setup_app(CLI::App& app);

// The file commands, the ones the front program runs itself: ratio, tone, track, chord, drift, history, analyze,
// tuning (in the whole program's order of registration).
void register_file_commands(CLI::App& app, Runner& run);

// Runs a parsed command inside the one error handler: Error -> exit 1, UsageError -> exit 2 (one line on stderr).
int run_guarded(const Runner& run);

}  // namespace beatless::ui
