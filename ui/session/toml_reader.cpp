// TOML helpers shared by the target, chord, drill and settings loaders — see toml_util.h.
//
// Every problem is one line in one form: "file:line: `key`: problem", with
// "; did you mean `x`?" when a known key is within a small edit distance
// (optimal string alignment distance: Damerau 1964, adjacent transpositions
// count as one edit). TOML syntax errors are put in our words; the parser's
// own text is never shown. Thread: any (no shared state).
#include "ui/session/toml_reader.h"

#include "pitch/base/error.h"
#include "pitch/base/text.h"
#include "ui/session/safe_file.h"
#include "ui/session/target_files.h"

#include <algorithm>
#include <cctype>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <vector>

namespace beatless::ui {

namespace {

bool contains(std::string_view s, std::string_view part) { return s.find(part) != std::string_view::npos; }

// Line `line` (1-based) of text, or "" past its end.
std::string_view line_of(std::string_view text, std::size_t line) {
    std::size_t start = 0;
    for (std::size_t n = 1; n < line; ++n) {
        start = text.find('\n', start);
        if (start == std::string_view::npos) return {};
        ++start;
    }
    const std::size_t end = text.find('\n', start);
    return text.substr(start, end == std::string_view::npos ? std::string_view::npos : end - start);
}

// The key a line assigns ("name" in `  name = "x`), or the header it opens ("[[target]]").
std::string key_on_line(std::string_view line) {
    std::size_t i = line.find_first_not_of(" \t");
    if (i == std::string_view::npos) return {};
    if (line[i] == '[') {
        const std::size_t close = line.find(']', i);
        std::string h(line.substr(i, close == std::string_view::npos ? std::string_view::npos : close - i + 1));
        if (h.starts_with("[[") && !h.ends_with("]]")) h = h.substr(0, h.find_last_not_of("]") + 1) + "]]";
        return h;
    }
    const std::size_t eq = line.find('=', i);
    if (eq == std::string_view::npos) return {};
    std::string_view k = line.substr(i, eq - i);
    while (!k.empty() && (k.back() == ' ' || k.back() == '\t')) k.remove_suffix(1);
    return std::string(k);
}

// The TOML library's description of a syntax error, in our words.
std::string syntax_problem(std::string_view d) {
    if (contains(d, "unknown escape sequence"))
        return "a backslash starts an unknown escape in a string (write \\\\ for a backslash)";
    if (contains(d, "cannot redefine")) return "given twice: keep one";
    if (contains(d, "string")) return "a string is not closed: add the closing quote on this line";
    if (contains(d, "table header")) return "a table header is not closed: write [name] or [[name]]";
    if (contains(d, "inline table")) return "a { table } is not closed with }";
    if (contains(d, "array")) return "a [ list ] is not closed with ]";
    if (contains(d, "expected value")) return "no value after `=`";
    if (contains(d, "expected '='")) return "expected `=` after the key";
    if (contains(d, "boolean")) return "expected true or false";
    if (contains(d, "expected a comment or whitespace")) return "unexpected text after the value";
    return "not valid TOML here (check quotes, brackets and `=`)";
}

// How a key appears in the file: `[drone]` for a table, `[[target]]` for a list of tables.
std::string as_written(std::string_view key, const toml::node& v) {
    // Built by appending: GCC 12 warns (-Wrestrict, a false positive) on "[" + std::string(key).
    const std::string_view open = v.is_table() ? "[" : v.is_array_of_tables() ? "[[" : "";
    const std::string_view close = v.is_table() ? "]" : v.is_array_of_tables() ? "]]" : "";
    std::string s;
    s.reserve(key.size() + 4);
    s.append(open).append(key).append(close);
    return s;
}

}  // namespace

std::string ticked(std::string_view key) {
    std::string s;
    s.reserve(key.size() + 2);
    s += '`';
    s += pitch::printable(key);  // a quoted key may hold any character
    s += '`';
    return s;
}

bool looks_like_toml_path(std::string_view s) {
    return s.find('/') != std::string_view::npos || (s.size() > 5 && s.substr(s.size() - 5) == ".toml");
}

std::string read_toml_text(const std::string& path) { return read_text_file(path, kTomlLimitBytes, "TOML file"); }

std::string describe_type(const toml::node& n) {
    switch (n.type()) {
        case toml::node_type::string: return "a string";
        case toml::node_type::integer: return "an integer";
        case toml::node_type::floating_point: return "a decimal number";
        case toml::node_type::boolean: return "true/false";
        case toml::node_type::table: return "a table";
        case toml::node_type::array: return "a list";
        default: return "a date or time";
    }
}

std::size_t edit_distance(std::string_view a, std::string_view b) {
    // Optimal string alignment: insert, delete, substitute, swap two neighbours.
    std::vector<std::vector<std::size_t>> d(a.size() + 1, std::vector<std::size_t>(b.size() + 1));
    for (std::size_t i = 0; i <= a.size(); ++i) d[i][0] = i;
    for (std::size_t j = 0; j <= b.size(); ++j) d[0][j] = j;
    for (std::size_t i = 1; i <= a.size(); ++i)
        for (std::size_t j = 1; j <= b.size(); ++j) {
            const std::size_t cost = a[i - 1] == b[j - 1] ? 0 : 1;
            d[i][j] = std::min({d[i - 1][j] + 1, d[i][j - 1] + 1, d[i - 1][j - 1] + cost});
            if (i > 1 && j > 1 && a[i - 1] == b[j - 2] && a[i - 2] == b[j - 1])
                d[i][j] = std::min(d[i][j], d[i - 2][j - 2] + 1);
        }
    return d[a.size()][b.size()];
}

std::string closest_name(std::string_view typed, std::initializer_list<std::string_view> known) {
    std::string lower(typed);
    for (char& c : lower) c = static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
    const std::size_t limit = typed.size() >= 6 ? 2 : 1;
    std::string best;
    std::size_t best_d = limit + 1;
    for (std::string_view k : known) {
        const std::size_t d = edit_distance(lower, k);
        if (d < best_d) {
            best_d = d;
            best = std::string(k);
        }
    }
    return best;
}

std::string where(const TomlDoc& doc, const toml::node& node) {
    const auto& src = node.source();
    if (src.begin.line == 0) return doc.source + ": ";
    return doc.source + ":" + std::to_string(src.begin.line) + ": ";
}

std::string unknown_key_problem(const TomlDoc& doc, std::string_view key, const toml::node& v,
                                std::initializer_list<std::string_view> known, std::string_view section) {
    const bool is_table = v.is_table() || v.is_array_of_tables();
    std::string msg = where(doc, v) + ticked(as_written(key, v)) + ": unknown " + (is_table ? "table" : "key");
    if (!section.empty()) msg.append(" in ").append(section);
    if (const std::string near = closest_name(key, known); !near.empty()) {
        msg += "; did you mean " + ticked(as_written(near, v)) + "?";
    } else {
        std::string list;
        for (std::string_view n : known) {
            if (n == "kind") continue;
            list.append(list.empty() ? "" : ", ").append(n);
        }
        msg += " (known: " + list + ")";
    }
    return msg;
}

void check_keys(const TomlDoc& doc, const toml::table& t, std::initializer_list<std::string_view> known,
                std::string_view section) {
    for (const auto& [k, v] : t)
        if (std::find(known.begin(), known.end(), k.str()) == known.end())
            throw Error(unknown_key_problem(doc, k.str(), v, known, section));
}

TomlDoc parse_toml(std::string_view text, std::string source, std::string_view kind) {
    TomlDoc doc;
    doc.source = std::move(source);
    try {
        doc.table = toml::parse(text, doc.source);
    } catch (const toml::parse_error& e) {
        const std::size_t line = e.source().begin.line;
        const std::string key = key_on_line(line_of(text, line));
        throw Error(doc.source + ":" + std::to_string(line) + ": " + (key.empty() ? "" : ticked(key) + ": ") +
                    syntax_problem(e.description()));
    }
    const auto k = doc.table["kind"];
    if (!k)
        throw Error(doc.source + ": `kind`: required key missing (write kind = \"" + std::string(kind) +
                    "\" on the first line)");
    if (!k.is_string() || k.value_or(std::string()) != kind)
        throw Error(where(doc, k) + "`kind`: is " +
                    (k.is_string() ? "\"" + k.value_or(std::string()) + "\"" : describe_type(*k.node())) +
                    ", expected \"" + std::string(kind) + "\"");
    return doc;
}

TomlDoc load_toml(std::string_view name_or_path, std::string_view kind) {
    if (looks_like_toml_path(name_or_path)) {
        const std::string path(name_or_path);
        return parse_toml(read_toml_text(path), path, kind);
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
    if (!v) throw Error(where(doc, t) + ticked(key) + ": required key missing");
    if (!v.is_string())
        throw Error(where(doc, v) + ticked(key) + ": must be a string, not " + describe_type(*v.node()));
    return pitch::printable(*v.value<std::string>());
}

std::string optional_string(const TomlDoc& doc, const toml::table& t, std::string_view key, std::string fallback) {
    const auto v = t[key];
    if (!v) return fallback;
    if (!v.is_string())
        throw Error(where(doc, v) + ticked(key) + ": must be a string, not " + describe_type(*v.node()));
    return pitch::printable(*v.value<std::string>());
}

double optional_number(const TomlDoc& doc, const toml::table& t, std::string_view key, double fallback) {
    const auto v = t[key];
    if (!v) return fallback;
    if (!v.is_number())
        throw Error(where(doc, v) + ticked(key) + ": must be a number, not " + describe_type(*v.node()));
    return *v.value<double>();
}

const toml::array& require_array_of_tables(const TomlDoc& doc, const toml::table& t, std::string_view key) {
    const auto v = t[key];
    if (!v)
        throw Error(where(doc, t) + ticked("[[" + std::string(key) + "]]") +
                    ": required table missing (add at least one)");
    const toml::array* a = v.as_array();
    if (!a || !a->is_array_of_tables() || a->empty())
        throw Error(where(doc, v) + ticked(key) + ": must be a list of [[" + std::string(key) + "]] tables, not " +
                    describe_type(*v.node()));
    return *a;
}

}  // namespace beatless::ui
