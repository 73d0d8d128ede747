#include "ui/session/chord_files.h"

#include "pitch/base/error.h"
#include "pitch/base/text.h"
#include "pitch/theory/ratio.h"
#include "ui/session/toml_reader.h"

#include <cctype>

namespace beatless::ui {

namespace {

std::string stem_of(std::string_view source) {
    std::string stem(source);
    if (const auto slash = stem.find_last_of('/'); slash != std::string::npos) stem = stem.substr(slash + 1);
    if (stem.size() > 5 && stem.ends_with(".toml")) stem.resize(stem.size() - 5);
    return stem;
}

ChordFile from_doc(const TomlDoc& doc) {
    ChordFile f;
    f.id = stem_of(doc.source);
    check_keys(doc, doc.table, {"kind", "title", "about", "chord", "voices"}, "");
    f.title = require_string(doc, doc.table, "title");
    f.about = optional_string(doc, doc.table, "about");
    f.text = require_string(doc, doc.table, "chord");
    try {
        f.chord = pitch::parse_chord(f.text);
    } catch (const Error& e) {
        throw Error(where(doc, doc.table["chord"]) + "`chord`: " + e.what());
    }
    if (const auto v = doc.table["voices"]) {
        const toml::array* a = v.as_array();
        if (!a)
            throw Error(where(doc, v) +
                        "`voices`: must be a list of part names, such as [\"bass\", \"tenor\", \"alto\"]");
        for (const auto& n : *a) {
            const auto s = n.value<std::string>();
            if (!s) throw Error(where(doc, n) + "`voices`: each entry must be a string, not " + describe_type(n));
            f.voice_names.push_back(*s);
        }
        if (f.voice_names.size() != f.chord.size())
            throw Error(where(doc, v) + "`voices`: names " + std::to_string(f.voice_names.size()) +
                        " parts but the chord " + pitch::quote(f.text) + " has " + std::to_string(f.chord.size()) +
                        " voices");
    }
    return f;
}

}  // namespace

ChordFile parse_chord_file(std::string_view text, std::string_view source_name) {
    return from_doc(parse_toml(text, std::string(source_name), "chord"));
}

ChordFile load_chord_file(std::string_view name_or_path) { return from_doc(load_toml(name_or_path, "chord")); }

ChordFile chord_from_argument(std::string_view arg) {
    const std::string_view t = pitch::trim(arg);
    if (t.ends_with(".toml")) return load_chord_file(t);
    const bool typed = t.empty() || std::isdigit(static_cast<unsigned char>(t[0])) ||
                       t.find_first_of(": \t,") != std::string_view::npos;
    if (!typed) return load_chord_file(t);  // a built-in name, or a path when it holds '/'
    ChordFile f;
    f.text = std::string(t);
    f.chord = pitch::parse_chord(t);
    return f;
}

}  // namespace beatless::ui
