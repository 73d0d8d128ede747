// Take files — see take_file.h.
//
// Index: [SECTION] Names  [SECTION] Writing  [SECTION] Reading  [SECTION] Drone  [SECTION] Listing and recovery
#include "ui/session/take_file.h"

#include "audio/drone.h"
#include "audio/take_writer.h"
#include "pitch/base/error.h"
#include "pitch/base/text.h"
#include "ui/session/safe_file.h"
#include "ui/session/toml_reader.h"

#include <sys/stat.h>
#include <algorithm>
#include <cmath>
#include <cstdio>
#include <ctime>
#include <sstream>

namespace beatless::ui {

namespace fs = std::filesystem;

namespace {

// TOML basic string (TOML 1.0, "Basic strings"): quote and backslash escaped, control characters as \uXXXX.
std::string toml_string(std::string_view v) {
    std::string out = "\"";
    for (char c : v) {
        const auto u = static_cast<unsigned char>(c);
        if (c == '"' || c == '\\') {
            out += '\\';
            out += c;
        } else if (u < 0x20 || u == 0x7f) {
            char buf[8];
            std::snprintf(buf, sizeof buf, "\\u%04X", u);
            out += buf;
        } else {
            out += c;
        }
    }
    return out + "\"";
}

std::string num(double v, int decimals) { return pitch::format_trimmed(v, decimals); }

std::string_view event_word(DroneEventKind k) {
    switch (k) {
        case DroneEventKind::on: return "on";
        case DroneEventKind::off: return "off";
        case DroneEventKind::root: return "root";
    }
    return "on";
}

// Seconds since the epoch (UTC) of "YYYY-MM-DDTHH:MM:SS+HH:MM" (or Z); 0 when it does not parse.
std::int64_t started_epoch_s(const std::string& s) {
    std::tm tm{};
    int oh = 0, om = 0;
    char sign = '+';
    if (std::sscanf(s.c_str(), "%4d-%2d-%2dT%2d:%2d:%2d%c%2d:%2d", &tm.tm_year, &tm.tm_mon, &tm.tm_mday, &tm.tm_hour,
                    &tm.tm_min, &tm.tm_sec, &sign, &oh, &om) < 6)
        return 0;
    tm.tm_year -= 1900;
    tm.tm_mon -= 1;
    const std::int64_t utc = static_cast<std::int64_t>(timegm(&tm));
    const std::int64_t off = (oh * 3600 + om * 60) * (sign == '-' ? -1 : 1);
    return sign == 'Z' ? utc : utc - off;
}

}  // namespace

// [SECTION] Names

fs::path take_sidecar_path(const fs::path& audio_path) {
    fs::path p = audio_path;
    p.replace_extension(".toml");
    return p;
}

fs::path takes_dir(const EnvLookup& env) { return app_dirs(env).data / "takes"; }

std::string take_stem(std::time_t when) {
    std::tm tm{};
    localtime_r(&when, &tm);
    char buf[32];
    std::strftime(buf, sizeof buf, "%Y-%m-%d_%H%M%S", &tm);
    return buf;
}

std::string iso8601_local(std::time_t when) {
    std::tm tm{};
    localtime_r(&when, &tm);
    char buf[40];
    std::strftime(buf, sizeof buf, "%Y-%m-%dT%H:%M:%S%z", &tm);
    std::string s = buf;  // ISO 8601 extended form wants the offset as +hh:mm
    if (s.size() >= 5) s.insert(s.size() - 2, ":");
    return s;
}

fs::path free_take_path(const fs::path& dir, std::time_t when) {
    const std::string stem = take_stem(when);
    for (int n = 1;; ++n) {
        const fs::path p = dir / (stem + (n == 1 ? "" : "-" + std::to_string(n)) + ".flac");
        std::error_code ec;
        if (!fs::exists(p, ec) && !fs::exists(take_sidecar_path(p), ec)) return p;
    }
}

// [SECTION] Writing

std::string take_sidecar_text(const TakeInfo& t) {
    std::ostringstream o;
    o << "# A Beatless take: the context of " << pitch::printable(t.audio_path.filename().string()) << "\n"
      << "kind = \"take\"\n"
      << "format = " << t.format << "\n"
      << "started = " << toml_string(t.started) << "\n"
      << "rate_hz = " << num(t.rate_hz, 3) << "\n"
      << "channels = " << t.channels << "\n"
      << "device = " << toml_string(t.device) << "\n"
      << "screen = " << toml_string(t.screen) << "\n"
      << "root_hz = " << num(t.root_hz, 6) << "\n"
      << "root = " << toml_string(t.root) << "\n"
      << "a4_hz = " << num(t.a4_hz, 6) << "\n"
      << "targets = " << toml_string(t.targets) << "\n";
    if (!t.target.empty()) o << "target = " << toml_string(t.target) << "\n";
    if (!t.drill.empty()) o << "drill = " << toml_string(t.drill) << "\n";
    if (t.voices != 1) o << "voices = " << t.voices << "\n";
    if (t.duration_s) o << "duration_s = " << num(*t.duration_s, 6) << "\n";
    o << "complete = " << (t.complete ? "true" : "false") << "\n";
    o << "\n[drone]\n"
      << "on = " << (t.drone.on ? "true" : "false") << "\n"
      << "timbre = " << toml_string(audio::timbre_name(t.drone.timbre)) << "\n"
      << "level_dbfs = " << num(t.drone.level_dbfs, 3) << "\n"
      << "fifth = " << (t.drone.fifth ? "true" : "false") << "\n"
      << "octave = " << (t.drone.octave ? "true" : "false") << "\n";
    if (t.drone.phases)
        o << "root_phase_rad = " << num(t.drone.phases->root_rad, 12) << "\n"
          << "fifth_phase_rad = " << num(t.drone.phases->fifth_rad, 12) << "\n";
    o << "events = [";
    const std::size_t n_events = std::min(t.drone.events.size(), kTakeMaxDroneEvents);
    for (std::size_t i = 0; i < n_events; ++i) {
        const DroneEvent& e = t.drone.events[i];
        o << (i ? ",\n  " : "\n  ") << "{ t_s = " << num(e.t_s, 6) << ", what = \"" << event_word(e.what)
          << "\", root_hz = " << num(e.root_hz, 6) << " }";
    }
    o << (n_events ? "\n]\n" : "]\n");
    for (const TakePlayer& p : t.players)
        o << "\n[[players]]\nchannel = " << p.channel << "\nname = " << toml_string(p.name) << "\nvoice = " << p.voice
          << "\n";
    return o.str();
}

void write_take_sidecar(const TakeInfo& take) { write_file_safely(take.sidecar_path, take_sidecar_text(take)); }

// [SECTION] Reading

namespace {

double require_number(const TomlDoc& doc, const toml::table& t, std::string_view key, double lo, double hi) {
    const auto v = t[key];
    if (!v) throw Error(where(doc, t) + ticked(key) + ": required key missing");
    if (!v.is_number())
        throw Error(where(doc, v) + ticked(key) + ": must be a number, not " + describe_type(*v.node()));
    const double x = *v.value<double>();
    if (!(x >= lo && x <= hi))
        throw Error(where(doc, v) + ticked(key) + ": " + num(x, 6) + " is out of range (" + num(lo, 6) + " to " +
                    num(hi, 6) + ")");
    return x;
}

int require_int(const TomlDoc& doc, const toml::table& t, std::string_view key, int lo, int hi) {
    const auto v = t[key];
    if (!v) throw Error(where(doc, t) + ticked(key) + ": required key missing");
    if (!v.is_integer())
        throw Error(where(doc, v) + ticked(key) + ": must be an integer, not " + describe_type(*v.node()));
    const std::int64_t x = *v.value<std::int64_t>();
    if (x < lo || x > hi)
        throw Error(where(doc, v) + ticked(key) + ": " + std::to_string(x) + " is out of range (" + std::to_string(lo) +
                    " to " + std::to_string(hi) + ")");
    return static_cast<int>(x);
}

bool optional_bool(const TomlDoc& doc, const toml::table& t, std::string_view key, bool fallback) {
    const auto v = t[key];
    if (!v) return fallback;
    if (!v.is_boolean())
        throw Error(where(doc, v) + ticked(key) + ": must be true or false, not " + describe_type(*v.node()));
    return *v.value<bool>();
}

}  // namespace

TakeInfo parse_take_sidecar(std::string_view text, const std::string& source) {
    const TomlDoc doc = parse_toml(text, source, "take");
    const toml::table& top = doc.table;
    check_keys(doc, top,
               {"kind", "format", "started", "rate_hz", "channels", "device", "screen", "root_hz", "root", "a4_hz",
                "targets", "target", "drill", "voices", "duration_s", "complete", "drone", "players"},
               "");
    TakeInfo t;
    t.format = require_int(doc, top, "format", 1, 1000);
    if (t.format != kTakeFormat)
        throw Error(where(doc, top["format"]) + "`format`: " + std::to_string(t.format) +
                    " is newer than this program reads (" + std::to_string(kTakeFormat) + ")");
    t.started = optional_string(doc, top, "started");
    t.rate_hz = require_number(doc, top, "rate_hz", 8000.0, 192000.0);
    t.channels = require_int(doc, top, "channels", 1, 8);
    t.device = optional_string(doc, top, "device");
    t.screen = optional_string(doc, top, "screen", "listen");
    t.root_hz = require_number(doc, top, "root_hz", 1.0, 20000.0);
    t.root = optional_string(doc, top, "root");
    t.a4_hz = optional_number(doc, top, "a4_hz", 440.0);
    if (!(t.a4_hz >= 300.0 && t.a4_hz <= 600.0))
        throw Error(where(doc, top["a4_hz"]) + "`a4_hz`: " + num(t.a4_hz, 3) + " is out of range (300 to 600)");
    t.targets = optional_string(doc, top, "targets");
    t.target = optional_string(doc, top, "target");
    t.drill = optional_string(doc, top, "drill");
    if (top["voices"]) t.voices = require_int(doc, top, "voices", 1, 2);
    if (top["duration_s"]) t.duration_s = require_number(doc, top, "duration_s", 0.0, 1e7);
    t.complete = optional_bool(doc, top, "complete", false);
    if (const auto d = top["drone"]) {
        const toml::table* dt = d.as_table();
        if (!dt) throw Error(where(doc, d) + "`drone`: must be a [drone] table, not " + describe_type(*d.node()));
        check_keys(doc, *dt,
                   {"on", "timbre", "level_dbfs", "fifth", "octave", "root_phase_rad", "fifth_phase_rad", "events"},
                   "[drone]");
        t.drone.on = optional_bool(doc, *dt, "on", false);
        if (const auto tv = (*dt)["timbre"]) {
            try {
                t.drone.timbre = audio::parse_timbre(optional_string(doc, *dt, "timbre"));
            } catch (const Error& e) {
                throw Error(where(doc, tv) + "`timbre`: " + e.what());
            }
        }
        t.drone.level_dbfs = optional_number(doc, *dt, "level_dbfs", -30.0);
        t.drone.fifth = optional_bool(doc, *dt, "fifth", false);
        t.drone.octave = optional_bool(doc, *dt, "octave", false);
        if ((*dt)["root_phase_rad"] || (*dt)["fifth_phase_rad"])
            t.drone.phases = audio::DronePhases{require_number(doc, *dt, "root_phase_rad", 0.0, 7.0),
                                                require_number(doc, *dt, "fifth_phase_rad", 0.0, 7.0), true};
        if (const auto ev = (*dt)["events"]) {
            const toml::array* a = ev.as_array();
            if (!a) throw Error(where(doc, ev) + "`events`: must be a list, not " + describe_type(*ev.node()));
            if (a->size() > kTakeMaxDroneEvents)
                throw Error(where(doc, ev) + "`events`: " + std::to_string(a->size()) + " changes (at most " +
                            std::to_string(kTakeMaxDroneEvents) + ")");
            for (const toml::node& n : *a) {
                const toml::table* e = n.as_table();
                if (!e) throw Error(where(doc, n) + "`events`: each change must be a { table }");
                check_keys(doc, *e, {"t_s", "what", "root_hz"}, "`events`");
                DroneEvent de;
                de.t_s = require_number(doc, *e, "t_s", 0.0, 1e7);
                const std::string w = require_string(doc, *e, "what");
                if (w == "on")
                    de.what = DroneEventKind::on;
                else if (w == "off")
                    de.what = DroneEventKind::off;
                else if (w == "root")
                    de.what = DroneEventKind::root;
                else
                    throw Error(where(doc, (*e)["what"]) + "`what`: " + pitch::quote(w) + " is not on, off or root");
                de.root_hz = require_number(doc, *e, "root_hz", 1.0, 20000.0);
                if (!t.drone.events.empty() && de.t_s < t.drone.events.back().t_s)
                    throw Error(where(doc, n) + "`events`: not in time order");
                t.drone.events.push_back(de);
            }
        }
    }
    if (const auto p = top["players"]) {
        const toml::array& a = require_array_of_tables(doc, top, "players");
        if (a.size() > kTakeMaxPlayers)
            throw Error(where(doc, p) + "`players`: " + std::to_string(a.size()) + " players (at most " +
                        std::to_string(kTakeMaxPlayers) + ")");
        for (const toml::node& n : a) {
            const toml::table& pt = *n.as_table();
            check_keys(doc, pt, {"channel", "name", "voice"}, "[[players]]");
            TakePlayer pl;
            pl.channel = require_int(doc, pt, "channel", 1, t.channels);
            pl.name = optional_string(doc, pt, "name");
            pl.voice = require_int(doc, pt, "voice", 1, 64);
            t.players.push_back(pl);
        }
    }
    return t;
}

TakeInfo read_take_sidecar(const fs::path& sidecar) {
    const std::string path = sidecar.string();
    TakeInfo t = parse_take_sidecar(read_text_file(path, kTomlLimitBytes, "take sidecar (TOML)"), path);
    t.sidecar_path = sidecar;
    t.audio_path = sidecar;
    t.audio_path.replace_extension(".flac");
    return t;
}

// [SECTION] Drone

std::vector<float> regenerate_drone(const TakeInfo& take, std::int64_t len_frames) {
    return regenerate_drone(take, 0, len_frames);
}

std::vector<float> regenerate_drone(const TakeInfo& take, std::int64_t from_frame, std::int64_t len_frames) {
    audio::DroneSettings ds;
    ds.on = take.drone.on;
    ds.root_hz = take.root_hz;
    ds.timbre = take.drone.timbre;
    ds.level_dbfs = take.drone.level_dbfs;
    ds.fifth = take.drone.fifth;
    ds.octave = take.drone.octave;
    audio::check_drone_settings(ds);
    audio::Drone drone(take.rate_hz);
    if (ds.on && take.drone.phases)
        drone.start_sounding(ds, *take.drone.phases);  // already sounding when the take began
    else
        drone.set(ds);
    // Frames before from_frame are rendered into a scratch block and dropped, so the phases run on as they did.
    const auto skip = static_cast<std::size_t>(std::max<std::int64_t>(0, from_frame));
    std::vector<float> out(static_cast<std::size_t>(std::max<std::int64_t>(0, len_frames)), 0.0f), scratch(256);
    std::size_t next = 0, at = 0;
    const auto frame_of = [&](const DroneEvent& e) {
        return static_cast<std::size_t>(std::llround(e.t_s * take.rate_hz));
    };
    while (at < skip + out.size()) {
        while (next < take.drone.events.size() && frame_of(take.drone.events[next]) <= at) {
            const DroneEvent& e = take.drone.events[next++];
            if (e.what == DroneEventKind::root)
                ds.root_hz = e.root_hz;
            else
                ds.on = e.what == DroneEventKind::on;
            audio::check_drone_settings(ds);
            drone.set(ds);
        }
        std::size_t end = std::min(at < skip ? skip : skip + out.size(), at + 256);
        if (next < take.drone.events.size()) end = std::min(end, std::max(at + 1, frame_of(take.drone.events[next])));
        if (at < skip)
            drone.render(std::span<float>(scratch.data(), end - at));
        else
            drone.render(std::span<float>(out.data() + (at - skip), end - at));
        at = end;
    }
    return out;
}

// [SECTION] Listing and recovery

std::vector<TakeInfo> list_takes(const fs::path& dir, std::vector<std::string>* problems) {
    std::vector<TakeInfo> out;
    std::error_code ec;
    if (!fs::is_directory(dir, ec)) return out;
    for (const auto& entry : fs::directory_iterator(dir, ec)) {
        const fs::path& p = entry.path();
        if (p.extension() != ".toml" || p.filename().string().starts_with(".")) continue;
        std::error_code fec;
        if (!entry.is_regular_file(fec)) continue;
        try {
            TakeInfo t = read_take_sidecar(p);
            if (!fs::is_regular_file(t.audio_path, fec)) {
                if (problems) problems->push_back(t.audio_path.string() + ": no such file (its sidecar is there)");
                continue;
            }
            out.push_back(std::move(t));
        } catch (const Error& e) {
            if (problems) problems->push_back(e.what());
        }
    }
    std::sort(out.begin(), out.end(), [](const TakeInfo& a, const TakeInfo& b) {
        const std::int64_t ta = started_epoch_s(a.started), tb = started_epoch_s(b.started);
        if (ta != tb) return ta > tb;
        return a.audio_path.filename().string() > b.audio_path.filename().string();
    });
    return out;
}

std::vector<RecoveredTake> recover_takes(const fs::path& dir) {
    std::vector<RecoveredTake> out;
    for (TakeInfo& t : list_takes(dir)) {
        if (t.complete) continue;
        RecoveredTake r;
        r.audio_path = t.audio_path;
        // A take written in the last seconds may belong to a recorder still running (it syncs every second).
        struct stat st {};
        if (::stat(t.audio_path.c_str(), &st) == 0 && std::time(nullptr) - st.st_mtime < kTakeBusySeconds) continue;
        try {
            SafeOutput fixed(t.audio_path);
            const audio::FlacRepair rep =
                audio::repair_flac(t.audio_path.string(), fixed.temp_path(), t.audio_path.string());
            fixed.commit();
            r.frames = rep.frames;
            r.duration_s = static_cast<double>(rep.frames) / rep.rate_hz;
            t.duration_s = r.duration_s;
            t.complete = true;
            write_take_sidecar(t);
        } catch (const Error& e) {
            r.problem = e.what();
        }
        out.push_back(std::move(r));
    }
    return out;
}

}  // namespace beatless::ui
