// Shared helpers for reading our TOML files (internal to ui/).
#pragma once

#include "pitch/error.h"

#include <toml++/toml.h>

#include <string>
#include <string_view>

namespace beatless::ui {

struct TomlDoc {
    std::string source;   // file path or "targets/<name>.toml"
    toml::table table;
};

// Finds a built-in file or reads a path, parses it and checks its `kind`.
// Throws Error "source:line: problem" on any failure.
TomlDoc load_toml(std::string_view name_or_path, std::string_view kind);
TomlDoc parse_toml(std::string_view text, std::string source, std::string_view kind);

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
