// The beatless subcommands. Each cmd_<name>.cpp registers one subcommand on
// the CLI11 app; its callback stores the action to run in `run`, and main()
// runs it inside one error handler (Error -> exit 1, UsageError -> exit 2).
#pragma once

#include <CLI/CLI.hpp>

#include <functional>

namespace beatless::ui {

using Runner = std::function<int()>;

void register_ratio(CLI::App& app, Runner& run);
void register_history(CLI::App& app, Runner& run);

// Output format choice shared by the commands.
enum class Format { text, json, csv };
void add_format_option(CLI::App& sub, Format& format, bool with_csv = true);

}  // namespace beatless::ui
