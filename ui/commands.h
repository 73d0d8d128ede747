// The beatless subcommands. Each cmd_<name>.cpp registers one subcommand on
// the CLI11 app; its callback stores the action to run in `run`, and main()
// runs it inside one error handler (Error -> exit 1, UsageError -> exit 2).
#pragma once

#include <CLI/CLI.hpp>

#include <functional>
#include <initializer_list>
#include <string>
#include <vector>

namespace beatless::ui {

using Runner = std::function<int()>;

void register_ratio(CLI::App& app, Runner& run);
void register_tone(CLI::App& app, Runner& run);
void register_track(CLI::App& app, Runner& run);
void register_chord(CLI::App& app, Runner& run);
void register_drift(CLI::App& app, Runner& run);
void register_history(CLI::App& app, Runner& run);
void register_analyze(CLI::App& app, Runner& run);

// Output format choice shared by the commands.
enum class Format { text, json, csv };
void add_format_option(CLI::App& sub, Format& format, bool with_csv = true);
void add_format_option(CLI::App& sub, Format& format, std::initializer_list<Format> allowed);

// Small text helpers shared by the commands.
std::string ordinal(int n);                                  // 1 -> "1st", 12 -> "12th"
std::string join_args(const std::vector<std::string>& args); // words joined by single spaces

}  // namespace beatless::ui
