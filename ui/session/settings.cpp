// Settings — see settings.h.
#include "ui/session/settings.h"

#include "pitch/base/error.h"
#include "pitch/base/text.h"
#include "pitch/measure/ensemble_analyzer.h"
#include "pitch/theory/notes.h"
#include "ui/session/safe_file.h"
#include "ui/session/toml_reader.h"

#include <algorithm>
#include <cmath>
#include <fstream>
#include <sstream>
#include <system_error>

namespace beatless::ui {

namespace fs = std::filesystem;

namespace {

// Collects problems with single values; the first is reported, the value
// keeps its default.
struct Reader {
    const TomlDoc& doc;
    std::string first_problem;
    int problems = 0;

    // `what` names the key and the problem; `then` says what the program does instead.
    void problem(const toml::node& n, const std::string& what, std::string_view then = "; using its default") {
        if (problems++ == 0) first_problem = where(doc, n) + what + std::string(then);
    }

    // Keys this version does not read are reported, never silently misread.
    void only(const toml::table& t, std::initializer_list<std::string_view> known, std::string_view section) {
        for (const auto& [k, v] : t) {
            if (std::find(known.begin(), known.end(), k.str()) != known.end()) continue;
            if (problems++ == 0) first_problem = unknown_key_problem(doc, k.str(), v, known, section) + " (ignored)";
        }
    }

    template <class F>
    void string(const toml::table& t, std::string_view key, F&& accept) {
        const auto v = t[key];
        if (!v) return;
        if (!v.is_string()) {
            problem(*v.node(), ticked(key) + ": must be a string");
            return;
        }
        try {
            accept(*v.value<std::string>());
        } catch (const Error& e) {
            problem(*v.node(), ticked(key) + ": " + e.what());
        }
    }

    void number(const toml::table& t, std::string_view key, double lo, double hi, double& out) {
        const auto v = t[key];
        if (!v) return;
        if (!v.is_number()) {
            problem(*v.node(), ticked(key) + ": must be a number");
            return;
        }
        const double x = *v.value<double>();
        if (!(x >= lo && x <= hi)) {
            problem(*v.node(), ticked(key) + ": " + pitch::format_trimmed(x, 3) + " is out of range (" +
                                   pitch::format_trimmed(lo, 3) + " to " + pitch::format_trimmed(hi, 3) + ")");
            return;
        }
        out = x;
    }

    void boolean(const toml::table& t, std::string_view key, bool& out) {
        const auto v = t[key];
        if (!v) return;
        if (!v.is_boolean()) {
            problem(*v.node(), ticked(key) + ": must be true or false");
            return;
        }
        out = *v.value<bool>();
    }

    const toml::table* table(std::string_view key) {
        const auto v = doc.table[key];
        if (!v) return nullptr;
        if (!v.is_table()) {
            problem(*v.node(), ticked(key) + ": must be a table ([" + std::string(key) + "])");
            return nullptr;
        }
        return v.as_table();
    }
};

void read_into(const TomlDoc& doc, Settings& s, Reader& r) {
    const toml::table& top = doc.table;
    // "screen", [targets] "choice" and "fixed" were written by earlier
    // versions: they are the window's transient state, not preferences, and
    // are no longer read (a later run starts on Practice, nearest target).
    r.only(top,
           {"kind", "screen", "caution_acknowledged", "a4_hz", "font_scale", "in_tune_cents", "lowest_hz",
            "input_device", "output_device", "midi_out", "midi_tuning", "midi_in", "drone", "targets", "ensemble"},
           "");
    r.boolean(top, "caution_acknowledged", s.caution_acknowledged);
    r.number(top, "a4_hz", 400.0, 480.0, s.a4_hz);
    double fs_ = s.font_scale;
    r.number(top, "font_scale", 0.5, 3.0, fs_);
    s.font_scale = static_cast<float>(fs_);
    r.number(top, "in_tune_cents", 1.0, 25.0, s.in_tune_cents);
    r.number(top, "lowest_hz", kLowestMinHz, kLowestMaxHz, s.lowest_hz);
    r.string(top, "input_device", [&](const std::string& v) { s.input_device = v; });
    r.string(top, "output_device", [&](const std::string& v) { s.output_device = v; });
    r.string(top, "midi_out", [&](const std::string& v) { s.midi_out = v; });
    r.string(top, "midi_tuning", [&](const std::string& v) {
        if (v != "mts" && v != "bend") throw Error("must be \"mts\" or \"bend\"");
        s.midi_tuning = v;
    });
    r.string(top, "midi_in", [&](const std::string& v) { s.midi_in = v; });
    if (const toml::table* d = r.table("drone")) {
        r.only(*d, {"root", "timbre", "level_dbfs", "fifth", "octave"}, "[drone]");
        r.string(*d, "root", [&](const std::string& v) {
            (void)pitch::parse_root(v, s.a4_hz);
            s.root = v;
        });
        r.string(*d, "timbre", [&](const std::string& v) { s.timbre = audio::parse_timbre(v); });
        r.number(*d, "level_dbfs", audio::kDroneMinLevelDbfs, audio::kDroneMaxLevelDbfs, s.level_dbfs);
        r.boolean(*d, "fifth", s.fifth);
        r.boolean(*d, "octave", s.octave);
    }
    if (const toml::table* t = r.table("targets")) {
        r.only(*t, {"set", "choice", "fixed"}, "[targets]");
        r.string(*t, "set", [&](const std::string& v) {
            if (pitch::trim(v).empty()) throw Error("must name a target set");
            s.target_set = v;
        });
    }
    if (const toml::table* e = r.table("ensemble")) {
        r.only(*e, {"chord", "reference", "input_device", "channels", "names", "voices"}, "[ensemble]");
        EnsembleSettings& es = s.ensemble;
        r.string(*e, "chord", [&](const std::string& v) {
            if (pitch::trim(v).empty()) throw Error("must name a chord");
            es.chord = v;
        });
        r.string(*e, "reference", [&](const std::string& v) { es.reference = pitch::parse_reference(v); });
        r.string(*e, "input_device", [&](const std::string& v) { es.input_device = v; });
        r.string(*e, "channels", [&](const std::string& v) { es.channels = v; });
        r.string(*e, "names", [&](const std::string& v) { es.names = v; });
        r.string(*e, "voices", [&](const std::string& v) { es.voices = v; });
    }
}

// TOML basic string with the escapes a path or device name may need.
std::string quoted(std::string_view v) {
    std::string out = "\"";
    for (char c : v) {
        if (c == '"' || c == '\\') out += '\\';
        if (static_cast<unsigned char>(c) < 0x20) continue;  // control characters never belong in these values
        out += c;
    }
    return out + "\"";
}

}  // namespace

std::vector<std::string> changed_preferences(const Settings& s) {
    const Settings d;
    std::vector<std::string> out;
    if (s.a4_hz != d.a4_hz) out.push_back("A4 " + pitch::format_trimmed(s.a4_hz, 1) + " Hz");
    if (s.lowest_hz != d.lowest_hz) out.push_back("lowest note " + pitch::format_trimmed(s.lowest_hz, 1) + " Hz");
    if (s.in_tune_cents != d.in_tune_cents)
        out.push_back("in tune within " + pitch::format_trimmed(s.in_tune_cents, 1) + " c");
    if (s.font_scale != d.font_scale) out.push_back("text size x" + pitch::format_trimmed(s.font_scale, 2));
    if (!s.input_device.empty()) out.push_back("input '" + s.input_device + "'");
    if (!s.output_device.empty()) out.push_back("output '" + s.output_device + "'");
    if (!s.midi_out.empty()) out.push_back("MIDI out '" + s.midi_out + "' (" + s.midi_tuning + ")");
    if (!s.midi_in.empty()) out.push_back("MIDI in '" + s.midi_in + "'");
    if (s.root != d.root) out.push_back("root " + s.root);
    if (s.timbre != d.timbre) out.push_back("timbre " + std::string(audio::timbre_name(s.timbre)));
    if (s.level_dbfs != d.level_dbfs) out.push_back("drone level " + pitch::format_trimmed(s.level_dbfs, 1) + " dBFS");
    if (s.fifth != d.fifth) out.push_back(s.fifth ? "fifth on" : "fifth off");
    if (s.octave != d.octave) out.push_back(s.octave ? "octave on" : "octave off");
    if (s.target_set != d.target_set) out.push_back("targets " + s.target_set);
    return out;
}

std::string_view target_choice_key(TargetChoice c) { return c == TargetChoice::fixed ? "fixed" : "nearest"; }

fs::path settings_path(const EnvLookup& env) { return app_dirs(env).config / "settings.toml"; }

LoadedSettings parse_settings(std::string_view text, const std::string& source) {
    LoadedSettings out;
    TomlDoc doc;
    try {
        doc = parse_toml(text, source, "settings");
    } catch (const Error& e) {
        out.warning = std::string(e.what()) + "; using the default settings";
        return out;
    }
    Reader r{doc, {}, 0};
    read_into(doc, out.settings, r);
    if (r.problems > 0) {
        out.warning = r.first_problem;
        if (r.problems > 1)
            out.warning +=
                " (and " + std::to_string(r.problems - 1) + " more problem" + (r.problems > 2 ? "s" : "") + ")";
    }
    return out;
}

LoadedSettings load_settings(const fs::path& file) {
    std::error_code ec;
    if (!fs::exists(file, ec)) return {};
    if (fs::is_directory(file, ec))
        return {Settings{}, file.string() + ": is a folder, not a settings file; using the default settings"};
    try {
        return parse_settings(read_text_file(file.string(), kTomlLimitBytes, "settings file"), file.string());
    } catch (const Error& e) {
        return {Settings{}, std::string(e.what()) + "; using the default settings"};
    }
}

std::string settings_toml(const Settings& s) {
    std::ostringstream o;
    o << "# Beatless settings, written by the program; edit with care.\n"
      << "kind = \"settings\"\n"
      << "caution_acknowledged = " << (s.caution_acknowledged ? "true" : "false") << "\n"
      << "a4_hz = " << pitch::format_trimmed(s.a4_hz, 3) << "\n"
      << "font_scale = " << pitch::format_trimmed(s.font_scale, 2) << "\n"
      << "in_tune_cents = " << pitch::format_trimmed(s.in_tune_cents, 2) << "\n"
      << "lowest_hz = " << pitch::format_trimmed(s.lowest_hz, 1) << "\n"
      << "input_device = " << quoted(s.input_device) << "\n"
      << "output_device = " << quoted(s.output_device) << "\n"
      << "midi_out = " << quoted(s.midi_out) << "\n"
      << "midi_tuning = " << quoted(s.midi_tuning) << "\n"
      << "midi_in = " << quoted(s.midi_in) << "\n"
      << "\n[drone]\n"
      << "root = " << quoted(s.root) << "\n"
      << "timbre = " << quoted(audio::timbre_name(s.timbre)) << "\n"
      << "level_dbfs = " << pitch::format_trimmed(s.level_dbfs, 1) << "\n"
      << "fifth = " << (s.fifth ? "true" : "false") << "\n"
      << "octave = " << (s.octave ? "true" : "false") << "\n"
      << "\n[targets]\n"
      << "set = " << quoted(s.target_set) << "\n"
      << "\n[ensemble]\n"
      << "chord = " << quoted(s.ensemble.chord) << "\n"
      << "reference = " << quoted(pitch::reference_key(s.ensemble.reference)) << "\n"
      << "input_device = " << quoted(s.ensemble.input_device) << "\n"
      << "channels = " << quoted(s.ensemble.channels) << "\n"
      << "names = " << quoted(s.ensemble.names) << "\n"
      << "voices = " << quoted(s.ensemble.voices) << "\n";
    return o.str();
}

void save_settings(const fs::path& file, const Settings& s) {
    ensure_dir(file.parent_path());
    write_file_safely(file, settings_toml(s));
}

}  // namespace beatless::ui
