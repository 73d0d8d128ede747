#include "ui/session/target_files.h"

#include "pitch/base/error.h"
#include "ui/session/chord_files.h"
#include "ui/session/toml_reader.h"

#include <algorithm>
#include <filesystem>
#include <fstream>
#include <mutex>
#include <sstream>

namespace beatless::ui {

std::vector<std::string> builtin_names(std::string_view kind) {
    std::vector<std::string> out;
    for (const auto& f : embedded_target_files()) {
        if (kind != f.kind) continue;
        const std::string n = f.name;
        out.push_back(n.substr(0, n.size() - 5));
    }
    std::sort(out.begin(), out.end());
    return out;
}

namespace {

// The file's `kind` when the text parses and holds one as a string, else "".
std::string kind_of(std::string_view text) {
    try {
        const toml::table t = toml::parse(text);
        return t["kind"].value_or(std::string());
    } catch (const toml::parse_error&) {
        return {};
    }
}

// A chord as a target set: each voice above the lowest is a target over the
// lowest, which is the drone (8:9:10:11:12 gives 9/8, 5/4, 11/8, 3/2).
pitch::TargetSet target_set_of_chord(const ChordFile& f) {
    pitch::TargetSet set;
    set.id = f.id;
    set.title = f.title;
    set.about = f.about;
    const auto& terms = f.chord.terms();
    for (std::size_t i = 1; i < terms.size(); ++i) {
        pitch::Target t;
        t.interval = pitch::Interval::of(pitch::Ratio::make(terms[i], terms[0]));
        if (const std::string* n = interval_names().find(t.interval)) t.name = *n;
        set.targets.push_back(std::move(t));
    }
    return set;
}

}  // namespace

pitch::TargetSet parse_target_set(std::string_view text, std::string_view source_name) {
    if (kind_of(text) == "chord") return target_set_of_chord(parse_chord_file(text, source_name));
    const TomlDoc doc = parse_toml(text, std::string(source_name), "targets");
    pitch::TargetSet set;
    std::string stem(source_name);
    if (const auto slash = stem.find_last_of('/'); slash != std::string::npos) stem = stem.substr(slash + 1);
    if (stem.size() > 5 && stem.substr(stem.size() - 5) == ".toml") stem.resize(stem.size() - 5);
    set.id = stem;
    check_keys(doc, doc.table, {"kind", "title", "about", "target"}, "");
    set.title = require_string(doc, doc.table, "title");
    set.about = optional_string(doc, doc.table, "about");
    const auto& entries = require_array_of_tables(doc, doc.table, "target");
    for (const auto& e : entries) {
        const toml::table& t = *e.as_table();
        check_keys(doc, t, {"interval", "name"}, "[[target]]");
        const std::string text_iv = require_string(doc, t, "interval");
        pitch::Target target;
        try {
            target.interval = pitch::parse_interval(text_iv);
        } catch (const Error& err) {
            throw Error(where(doc, t["interval"]) + "`interval`: " + err.what());
        }
        target.name = optional_string(doc, t, "name");
        if (target.name.empty()) {
            if (const std::string* n = interval_names().find(target.interval)) target.name = *n;
        }
        set.targets.push_back(std::move(target));
    }
    return set;
}

pitch::TargetSet load_target_set(std::string_view name_or_path) {
    if (looks_like_toml_path(name_or_path)) {
        const std::string path(name_or_path);
        return parse_target_set(read_toml_text(path), path);
    }
    for (const auto& f : embedded_target_files()) {
        if (std::string(name_or_path) + ".toml" == f.name)
            return parse_target_set(f.text, "targets/" + std::string(f.name));
    }
    (void)load_toml(name_or_path, "targets");  // throws naming the known sets
    throw Error("'" + std::string(name_or_path) + "': no built-in target set of that name");
}

const pitch::IntervalNames& interval_names() {
    static std::once_flag once;
    static pitch::IntervalNames names;
    std::call_once(once, [] {
        const TomlDoc doc = load_toml("names", "names");
        check_keys(doc, doc.table, {"kind", "names"}, "");
        const auto* t = doc.table["names"].as_table();
        if (!t) throw Error(doc.source + ": `[names]`: required table missing");
        for (const auto& [k, v] : *t) {
            const auto s = v.value<std::string>();
            if (!s)
                throw Error(where(doc, v) + "`" + std::string(k.str()) + "`: must be a string, not " +
                            describe_type(v));
            names.add(pitch::parse_interval(k.str()), *s);
        }
    });
    return names;
}

}  // namespace beatless::ui
