// The helpers every command shares (commands.h): the --format option, small text helpers, the hearing caution.
#include "ui/commands/commands.h"

#include "pitch/base/error.h"
#include "pitch/base/text.h"
#include "pitch/theory/notes.h"
#include "ui/session/safe_file.h"
#include "ui/session/settings.h"

#include <cctype>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <fstream>
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
    sub.add_option("--format", format, help)
        ->transform(CLI::CheckedTransformer(names, CLI::ignore_case).description(""));
}

void add_a4_option(CLI::App& sub, double& a4_hz) {
    sub.add_option("--a4", a4_hz, "A4 reference in Hz (400-480, default 440)");
}

void add_format_option(CLI::App& sub, Format& format, bool with_csv) {
    if (with_csv)
        add_format_option(sub, format, {Format::text, Format::json, Format::csv});
    else
        add_format_option(sub, format, {Format::text, Format::json});
}

std::string join_args(const std::vector<std::string>& args) {
    std::string s;
    for (const auto& a : args) {
        if (!s.empty()) s += ' ';
        s += a;
    }
    return s;
}

std::string root_echo(std::string_view typed, double root_hz) {
    const std::string_view t = pitch::trim(typed);
    const std::string hz = pitch::format_trimmed(root_hz, 3) + " Hz";
    if (t.empty() || !std::isalpha(static_cast<unsigned char>(t[0]))) return hz;
    return std::string(t) + " = " + hz;
}

namespace {

std::string config_home() {
    if (const char* b = std::getenv("BEATLESS_HOME"); b && *b) return std::string(b) + "/config";
    if (const char* x = std::getenv("XDG_CONFIG_HOME"); x && *x) return std::string(x) + "/beatless";
    if (const char* h = std::getenv("HOME"); h && *h) return std::string(h) + "/.config/beatless";
    return {};
}

}  // namespace

// The hearing caution, once per user (a marker file in the config directory).
void hearing_caution_once() {
    const std::string dir = config_home();
    const std::string marker = dir.empty() ? std::string() : dir + "/drone-caution-shown";
    std::error_code ec;
    if (!marker.empty() && std::filesystem::exists(marker, ec)) return;
    std::fprintf(stderr,
                 "beatless: caution: the drone is a sustained tone; keep the level low, especially on headphones, and "
                 "take breaks\n");
    if (marker.empty()) return;
    std::filesystem::create_directories(dir, ec);  // the program's own config folder
    try {
        write_file_safely(marker, "shown\n");
    } catch (const Error&) {
        // Not kept: the caution is shown again next time, which is harmless.
    }
}

}  // namespace beatless::ui
