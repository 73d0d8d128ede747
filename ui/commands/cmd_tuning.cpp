// beatless tuning SET --root NOTE|HZ [--a4 HZ] [--layout nearest|sequence] [--format text|json|syx] [--out FILE]
//                 [--program N] [--device N]
//
// Lays a target set (or a chord's voices) on the 128 keys of a MIDI keyboard
// (pitch/theory/key_map.h) and prints each key's tuning, or writes it as an
// MTS bulk tuning dump (.syx, pitch/theory/midi_tuning.h) for instruments
// that load one. Files are written whole or not at all (ui/session/safe_file.h).
#include "pitch/base/error.h"
#include "pitch/base/text.h"
#include "pitch/theory/key_map.h"
#include "pitch/theory/midi_tuning.h"
#include "pitch/theory/notes.h"
#include "ui/commands/commands.h"
#include "ui/session/json.h"
#include "ui/session/safe_file.h"
#include "ui/session/target_files.h"

#include <cmath>
#include <cstdio>
#include <map>
#include <memory>

namespace beatless::ui {

namespace {

enum class TuningFormat { text, json, syx };

struct TuningOptions {
    std::string set;
    std::string root;
    double a4_hz = pitch::kDefaultA4Hz;
    TuningFormat format = TuningFormat::text;
    std::string out;
    int program = 0;
    int device = 0x7F;
    pitch::KeyLayout layout = pitch::KeyLayout::nearest;
};

struct Tuning {
    pitch::TargetSet set;
    double root_hz = 0.0;
    pitch::KeyMap map;
    pitch::BlackKeys spelled = pitch::BlackKeys::sharps;
};

std::string hex_word(const pitch::MtsWord& w) {
    char buf[16];
    std::snprintf(buf, sizeof buf, "%02X %02X %02X", w.semitone, w.msb, w.lsb);
    return buf;
}

std::string target_label(const Tuning& t, const pitch::KeyTuning& k) {
    if (k.target < 0) {
        const double octaves = k.cents_over_root / 1200.0;
        return octaves == std::round(octaves) ? "root" : "(12-TET from the root)";
    }
    const pitch::Target& target = t.set.targets[static_cast<std::size_t>(k.target)];
    return target.name.empty() ? target.interval.str() : target.interval.str() + " " + target.name;
}

std::string text_of(const Tuning& t, const TuningOptions& o) {
    std::string s = "Tuning: " + t.set.title + " over " + root_echo(o.root, t.root_hz) + " on key " +
                    std::to_string(t.map.root_key) + " (" + pitch::midi_to_name(t.map.root_key, t.spelled) + ")\n";
    s += "MTS words count 0.0061-cent steps above MIDI key 0 with A4 = 440 Hz (the standard's reference).\n\n";
    s += "key  note    Hz          vs 12-TET   MTS xx yy zz  target\n";
    for (int k = 0; k < 128; ++k) {
        const pitch::KeyTuning& key = t.map.keys[static_cast<std::size_t>(k)];
        const pitch::MtsWord w = pitch::mts_word(key.freq_hz);
        const double vs_et = (pitch::hz_to_midi(key.freq_hz, pitch::kMtsA4Hz) - k) * 100.0;
        char line[160];
        std::snprintf(line, sizeof line, "%3d  %-5s %11.4f  %+9.3f c  %s      %s", k,
                      pitch::midi_to_name(k, t.spelled).c_str(), key.freq_hz, vs_et, hex_word(w).c_str(),
                      target_label(t, key).c_str());
        s += line;
        s += '\n';
    }
    if (!t.map.unplaced.empty()) {
        s += "\nNot on a key (a nearer target holds the key; --layout sequence puts each on a key of its own):";
        for (std::size_t i : t.map.unplaced) s += " " + t.set.targets[i].interval.str();
        s += "\n";
    }
    return s;
}

std::string json_of(const Tuning& t, const TuningOptions& o) {
    JsonWriter j;
    j.begin_object().key("set").value(t.set.id).key("title").value(t.set.title);
    j.key("root").value(o.root).key("root_hz").value(t.root_hz, 4).key("root_key").value(t.map.root_key);
    j.key("a4_hz").value(o.a4_hz, 3).key("mts_a4_hz").value(pitch::kMtsA4Hz, 1);
    j.key("keys").begin_array();
    for (int k = 0; k < 128; ++k) {
        const pitch::KeyTuning& key = t.map.keys[static_cast<std::size_t>(k)];
        const pitch::MtsWord w = pitch::mts_word(key.freq_hz);
        j.begin_object().key("key").value(k).key("note").value(pitch::midi_to_name(k, t.spelled));
        j.key("freq_hz").value(key.freq_hz, 6).key("cents_over_root").value(key.cents_over_root, 4);
        j.key("mts").begin_array().value(int{w.semitone}).value(int{w.msb}).value(int{w.lsb}).end_array();
        j.key("target");
        if (key.target >= 0)
            j.value(t.set.targets[static_cast<std::size_t>(key.target)].interval.str());
        else
            j.null();
        j.end_object();
    }
    j.end_array().key("unplaced").begin_array();
    for (std::size_t i : t.map.unplaced) j.value(t.set.targets[i].interval.str());
    j.end_array().end_object();
    return j.str() + "\n";
}

int run_tuning(const TuningOptions& o) {
    pitch::check_a4(o.a4_hz);
    if (o.program < 0 || o.program > 127)
        throw Error("--program " + std::to_string(o.program) + ": out of range (0 to 127)");
    if (o.device < 0 || o.device > 127)
        throw Error("--device " + std::to_string(o.device) + ": out of range (0 to 127; 127 = all)");
    if (o.format == TuningFormat::syx && o.out.empty())
        throw UsageError("--format syx writes a binary file: give --out FILE.syx");
    Tuning t;
    t.set = load_target_set(o.set);
    t.root_hz = pitch::parse_root(o.root, o.a4_hz);
    t.spelled = pitch::has_flat(o.root) ? pitch::BlackKeys::flats : pitch::BlackKeys::sharps;
    const int root_key = static_cast<int>(std::lround(pitch::hz_to_midi(t.root_hz, pitch::kMtsA4Hz)));
    t.map = pitch::map_targets_to_keys(t.set, t.root_hz, root_key, o.layout);

    std::string bytes;
    if (o.format == TuningFormat::syx) {
        std::array<double, 128> hz{};
        for (std::size_t k = 0; k < 128; ++k) hz[k] = t.map.keys[k].freq_hz;
        const auto dump =
            pitch::mts_bulk_dump(static_cast<std::uint8_t>(o.device), static_cast<std::uint8_t>(o.program),
                                 t.set.id.empty() ? "beatless" : t.set.id, hz);
        bytes.assign(dump.begin(), dump.end());
    } else {
        bytes = o.format == TuningFormat::json ? json_of(t, o) : text_of(t, o);
    }
    if (o.out.empty()) {
        std::fwrite(bytes.data(), 1, bytes.size(), stdout);
        return 0;
    }
    write_file_safely(o.out, bytes);
    std::printf("wrote %s: %s over %s, %zu bytes%s\n", o.out.c_str(), t.set.title.c_str(),
                root_echo(o.root, t.root_hz).c_str(), bytes.size(),
                o.format == TuningFormat::syx ? " (MTS bulk tuning dump, 128 keys)" : "");
    return 0;
}

}  // namespace

void register_tuning(CLI::App& app, Runner& run) {
    auto o = std::make_shared<TuningOptions>();
    auto* sub = app.add_subcommand(
        "tuning", "Lay a target set on the 128 MIDI keys: a listing, or an MTS bulk tuning dump (.syx)");
    sub->add_option("SET", o->set, "Target set or chord: a built-in name (tritones, harmonic-cluster) or a .toml file")
        ->required();
    sub->add_option("--root", o->root, "Root as a note (D3) or in Hz: the key nearest to it sounds it exactly")
        ->required();
    sub->add_option("--a4", o->a4_hz, "A4 reference in Hz for note roots (400-480, default 440)");
    const std::map<std::string, TuningFormat> formats = {
        {"text", TuningFormat::text}, {"json", TuningFormat::json}, {"syx", TuningFormat::syx}};
    sub->add_option("--format", o->format, "Output form: text json syx (syx needs --out)")
        ->transform(CLI::CheckedTransformer(formats, CLI::ignore_case).description(""));
    const std::map<std::string, pitch::KeyLayout> layouts = {{"nearest", pitch::KeyLayout::nearest},
                                                             {"sequence", pitch::KeyLayout::sequence}};
    sub->add_option("--layout", o->layout,
                    "nearest: each target on the key of its nearest 12-TET step (default); sequence: one target a key "
                    "above the root, in the set's order")
        ->transform(CLI::CheckedTransformer(layouts, CLI::ignore_case).description(""));
    sub->add_option("--out", o->out, "Write to this file (whole or not at all) instead of the terminal");
    sub->add_option("--program", o->program, "MTS tuning program number in the dump, 0-127 (default 0)");
    sub->add_option("--device", o->device, "MIDI SysEx device ID, 0-127 (default 127: all devices)");
    sub->callback([o, &run] { run = [o] { return run_tuning(*o); }; });
}

}  // namespace beatless::ui
