// Paths — where beatless keeps its settings and its practice log.
//
// Follows the XDG Base Directory Specification (freedesktop.org, 0.8):
//   config  $XDG_CONFIG_HOME/beatless, else $HOME/.config/beatless
//   data    $XDG_DATA_HOME/beatless,   else $HOME/.local/share/beatless
// An XDG variable that is empty or not an absolute path is ignored, as the
// specification asks. BEATLESS_HOME (for tests and portable installs)
// overrides both: config in $BEATLESS_HOME/config, data in
// $BEATLESS_HOME/data, so the two stay apart exactly as in a normal install.
// Nothing is created until ensure_dir() is called.
#pragma once

#include <filesystem>
#include <functional>
#include <string>

namespace beatless::ui {

// Looks up an environment variable; nullptr when unset. Tests pass their own.
using EnvLookup = std::function<const char*(const char*)>;
EnvLookup process_env();

struct AppDirs {
    std::filesystem::path config;  // settings
    std::filesystem::path data;    // practice log
};

// Throws Error when no folder can be found (HOME unset and no override).
AppDirs app_dirs(const EnvLookup& env = process_env());

std::filesystem::path practice_log_path(const EnvLookup& env = process_env());  // data / "practice.sqlite3"

// Creates the folder and its parents when missing. Throws Error "cannot
// create folder PATH: reason" (a file in the way, no permission...).
void ensure_dir(const std::filesystem::path& dir);

}  // namespace beatless::ui
