// Shared helpers for reading our TOML files (internal to ui/).
// Every problem is one line: "file:line: `key`: problem[; did you mean `x`?]".
#pragma once

#include "pitch/base/error.h"

#include <toml++/toml.h>

#include <cstddef>
#include <initializer_list>
#include <string>
#include <string_view>

namespace beatless::ui {

struct TomlDoc {
    std::string source;  // file path or "targets/<name>.toml"
    toml::table table;
};

// Finds a built-in file or reads a path, parses it and checks its `kind`.
// Throws Error "source:line: problem" on any failure.
TomlDoc load_toml(std::string_view name_or_path, std::string_view kind);
TomlDoc parse_toml(std::string_view text, std::string source, std::string_view kind);

// `key` in backticks, as every message names a key.
std::string ticked(std::string_view key);
// True when the argument names a file (holds '/' or ends in ".toml") rather than a built-in.
bool looks_like_toml_path(std::string_view s);
// The whole file at path; throws Error "path: no such file" and the like.
std::string read_toml_text(const std::string& path);
// "a string", "an integer", "a list" ... for messages.
std::string describe_type(const toml::node& n);
// Edits (insert, delete, substitute, swap neighbours) turning a into b.
std::size_t edit_distance(std::string_view a, std::string_view b);
// The known name closest to `typed` (1 edit, 2 from six letters), or "".
std::string closest_name(std::string_view typed, std::initializer_list<std::string_view> known);
// "file:line: `nmae`: unknown key in [[target]]; did you mean `name`?"
std::string unknown_key_problem(const TomlDoc& doc, std::string_view key, const toml::node& v,
                                std::initializer_list<std::string_view> known, std::string_view section);
// Throws Error for the first key of t not in `known`, with a suggestion;
// `section` names where it sits ("[drone]", "[[target]]"; "" at the top).
void check_keys(const TomlDoc& doc, const toml::table& t, std::initializer_list<std::string_view> known,
                std::string_view section);

// "source:line: " for a node (or "source: " when it has no position).
std::string where(const TomlDoc& doc, const toml::node& node);
template <class N>
std::string where(const TomlDoc& doc, const toml::node_view<N>& view) {
    return view ? where(doc, *view.node()) : doc.source + ": ";
}

// Required and optional typed fields; messages name the key and the file line.
std::string require_string(const TomlDoc& doc, const toml::table& t, std::string_view key);
std::string optional_string(const TomlDoc& doc, const toml::table& t, std::string_view key, std::string fallback = {});
double optional_number(const TomlDoc& doc, const toml::table& t, std::string_view key, double fallback);
const toml::array& require_array_of_tables(const TomlDoc& doc, const toml::table& t, std::string_view key);

}  // namespace beatless::ui
