#include "ui/target_files.h"

#include "pitch/error.h"
#include "ui/toml_util.h"

#include <algorithm>
#include <filesystem>
#include <fstream>
#include <mutex>
#include <sstream>

namespace beatless::ui {

namespace {

bool looks_like_path(std::string_view s) {
    return s.find('/') != std::string_view::npos || (s.size() > 5 && s.substr(s.size() - 5) == ".toml");
}

std::string read_file(const std::string& path) {
    std::error_code ec;
    if (!std::filesystem::exists(path, ec)) throw Error(path + ": no such file");
    if (std::filesystem::is_directory(path, ec)) throw Error(path + ": is a directory, not a TOML file");
    std::ifstream in(path, std::ios::binary);
    if (!in) throw Error(path + ": cannot be read (permission denied?)");
    std::ostringstream ss;
    ss << in.rdbuf();
    return ss.str();
}

std::string describe(const toml::node& n) {
    switch (n.type()) {
        case toml::node_type::string: return "a string";
        case toml::node_type::integer: return "an integer";
        case toml::node_type::floating_point: return "a number";
        case toml::node_type::boolean: return "true/false";
        case toml::node_type::table: return "a table";
        case toml::node_type::array: return "an array";
        default: return "a date or time";
    }
}

}  // namespace

std::string where(const TomlDoc& doc, const toml::node& node) {
    const auto& src = node.source();
    if (src.begin.line == 0) return doc.source + ": ";
    return doc.source + ":" + std::to_string(src.begin.line) + ": ";
}


TomlDoc parse_toml(std::string_view text, std::string source, std::string_view kind) {
    TomlDoc doc;
    doc.source = std::move(source);
    try {
        doc.table = toml::parse(text, doc.source);
    } catch (const toml::parse_error& e) {
        std::string msg(e.description());
        std::replace(msg.begin(), msg.end(), '\n', ' ');
        throw Error(doc.source + ":" + std::to_string(e.source().begin.line) + ": " + msg);
    }
    const auto k = doc.table["kind"];
    if (!k) throw Error(doc.source + ": missing top-level key 'kind' (expected kind = \"" + std::string(kind) + "\")");
    if (!k.is_string() || k.value_or(std::string()) != kind)
        throw Error(where(doc, k) + "kind is " + (k.is_string() ? "'" + k.value_or(std::string()) + "'" : describe(*k.node())) +
                    ", expected \"" + std::string(kind) + "\"");
    return doc;
}

TomlDoc load_toml(std::string_view name_or_path, std::string_view kind) {
    if (looks_like_path(name_or_path)) {
        const std::string path(name_or_path);
        return parse_toml(read_file(path), path, kind);
    }
    const std::string file = std::string(name_or_path) + ".toml";
    for (const auto& f : embedded_target_files()) {
        if (file == f.name) return parse_toml(f.text, "targets/" + file, kind);
    }
    std::string known;
    for (const auto& n : builtin_names(kind)) {
        if (!known.empty()) known += ", ";
        known += n;
    }
    std::string msg = "'";
    msg.append(name_or_path);
    msg.append("': no built-in ").append(kind).append(" file of that name (known: ").append(known);
    msg.append("; or give a path to a .toml file)");
    throw Error(msg);
}

std::string require_string(const TomlDoc& doc, const toml::table& t, std::string_view key) {
    const auto v = t[key];
    if (!v) throw Error(where(doc, t) + "missing key '" + std::string(key) + "'");
    if (!v.is_string()) throw Error(where(doc, v) + "'" + std::string(key) + "' must be a string, not " + describe(*v.node()));
    return *v.value<std::string>();
}

std::string optional_string(const TomlDoc& doc, const toml::table& t, std::string_view key, std::string fallback) {
    const auto v = t[key];
    if (!v) return fallback;
    if (!v.is_string()) throw Error(where(doc, v) + "'" + std::string(key) + "' must be a string, not " + describe(*v.node()));
    return *v.value<std::string>();
}

double optional_number(const TomlDoc& doc, const toml::table& t, std::string_view key, double fallback) {
    const auto v = t[key];
    if (!v) return fallback;
    if (!v.is_number()) throw Error(where(doc, v) + "'" + std::string(key) + "' must be a number, not " + describe(*v.node()));
    return *v.value<double>();
}

const toml::array& require_array_of_tables(const TomlDoc& doc, const toml::table& t, std::string_view key) {
    const auto v = t[key];
    if (!v) throw Error(where(doc, t) + "missing [[" + std::string(key) + "]] entries");
    const toml::array* a = v.as_array();
    if (!a || !a->is_array_of_tables() || a->empty())
        throw Error(where(doc, v) + "'" + std::string(key) + "' must be a list of [[" + std::string(key) + "]] tables");
    return *a;
}

std::vector<std::string> builtin_names(std::string_view kind) {
    std::vector<std::string> out;
    for (const auto& f : embedded_target_files()) {
        try {
            const TomlDoc d = parse_toml(f.text, f.name, kind);
            std::string n = f.name;
            out.push_back(n.substr(0, n.size() - 5));
        } catch (const Error&) {
        }
    }
    std::sort(out.begin(), out.end());
    return out;
}

pitch::TargetSet parse_target_set(std::string_view text, std::string_view source_name) {
    const TomlDoc doc = parse_toml(text, std::string(source_name), "targets");
    pitch::TargetSet set;
    std::string stem(source_name);
    if (const auto slash = stem.find_last_of('/'); slash != std::string::npos) stem = stem.substr(slash + 1);
    if (stem.size() > 5 && stem.substr(stem.size() - 5) == ".toml") stem.resize(stem.size() - 5);
    set.id = stem;
    set.title = require_string(doc, doc.table, "title");
    set.about = optional_string(doc, doc.table, "about");
    const auto& entries = require_array_of_tables(doc, doc.table, "target");
    for (const auto& e : entries) {
        const toml::table& t = *e.as_table();
        const std::string text_iv = require_string(doc, t, "interval");
        pitch::Target target;
        try {
            target.interval = pitch::parse_interval(text_iv);
        } catch (const Error& err) {
            throw Error(where(doc, t["interval"]) + err.what());
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
    if (looks_like_path(name_or_path)) {
        const std::string path(name_or_path);
        return parse_target_set(read_file(path), path);
    }
    const TomlDoc probe = load_toml(name_or_path, "targets");  // checks existence and kind
    for (const auto& f : embedded_target_files()) {
        if (std::string(name_or_path) + ".toml" == f.name) return parse_target_set(f.text, probe.source);
    }
    throw Error("'" + std::string(name_or_path) + "': no built-in target set of that name");
}

const pitch::IntervalNames& interval_names() {
    static std::once_flag once;
    static pitch::IntervalNames names;
    std::call_once(once, [] {
        const TomlDoc doc = load_toml("names", "names");
        const auto* t = doc.table["names"].as_table();
        if (!t) throw Error(doc.source + ": missing [names] table");
        for (const auto& [k, v] : *t) {
            const auto s = v.value<std::string>();
            if (!s) throw Error(where(doc, v) + "name for '" + std::string(k.str()) + "' must be a string");
            names.add(pitch::parse_interval(k.str()), *s);
        }
    });
    return names;
}

}  // namespace beatless::ui
