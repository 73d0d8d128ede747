#include "ui/session/paths.h"

#include "pitch/base/error.h"

#include <cstdlib>
#include <system_error>

namespace beatless::ui {

namespace fs = std::filesystem;

EnvLookup process_env() {
    return [](const char* name) -> const char* { return std::getenv(name); };
}

namespace {

// An absolute path from the variable, or empty.
fs::path absolute_var(const EnvLookup& env, const char* name) {
    const char* v = env(name);
    if (!v || !*v) return {};
    fs::path p(v);
    return p.is_absolute() ? p : fs::path{};
}

}  // namespace

AppDirs app_dirs(const EnvLookup& env) {
    if (const char* home = env("BEATLESS_HOME"); home && *home) {
        const fs::path base = fs::absolute(fs::path(home));
        return {base / "config", base / "data"};
    }
    AppDirs d;
    const fs::path xdg_config = absolute_var(env, "XDG_CONFIG_HOME");
    const fs::path xdg_data = absolute_var(env, "XDG_DATA_HOME");
    const char* home = env("HOME");
    const bool have_home = home && *home;
    if ((xdg_config.empty() || xdg_data.empty()) && !have_home)
        throw Error(
            "cannot find a folder for settings and the practice log: HOME is not set (set HOME, XDG_DATA_HOME or "
            "BEATLESS_HOME)");
    d.config = (xdg_config.empty() ? fs::path(home) / ".config" : xdg_config) / "beatless";
    d.data = (xdg_data.empty() ? fs::path(home) / ".local" / "share" : xdg_data) / "beatless";
    return d;
}

fs::path practice_log_path(const EnvLookup& env) { return app_dirs(env).data / "practice.sqlite3"; }

void ensure_dir(const fs::path& dir) {
    std::error_code ec;
    if (fs::is_directory(dir, ec)) return;
    fs::create_directories(dir, ec);
    if (ec || !fs::is_directory(dir)) {
        // Name the part of the path that is in the way, if any.
        std::string why = ec ? ec.message() : "not a folder";
        for (fs::path p = dir; !p.empty() && p != p.root_path(); p = p.parent_path()) {
            std::error_code e2;
            if (fs::exists(p, e2) && !fs::is_directory(p, e2)) {
                why = p.string() + " is a file, not a folder";
                break;
            }
        }
        throw Error("cannot create folder " + dir.string() + ": " + why);
    }
}

}  // namespace beatless::ui
