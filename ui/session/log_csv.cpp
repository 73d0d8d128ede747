// Log CSV implementation.
//
// Index
//   1. base64 (RFC 4648)
//   2. Writing rows
//   3. Reading records (RFC 4180) with their line numbers
//   4. Checking fields and importing
#include "ui/session/log_csv.h"

#include "pitch/base/text.h"
#include "pitch/theory/interval.h"

#include <array>
#include <charconv>
#include <cstdio>
#include <map>
#include <set>

namespace beatless::ui {

// ---- 1. base64 -------------------------------------------------------------

namespace {
constexpr char kB64[] = "ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/";
}

std::string base64_encode(std::string_view in) {
    std::string out;
    out.reserve((in.size() + 2) / 3 * 4);
    std::size_t i = 0;
    for (; i + 3 <= in.size(); i += 3) {
        const auto v = (static_cast<std::uint32_t>(static_cast<unsigned char>(in[i])) << 16) |
                       (static_cast<std::uint32_t>(static_cast<unsigned char>(in[i + 1])) << 8) |
                       static_cast<unsigned char>(in[i + 2]);
        out += kB64[v >> 18];
        out += kB64[(v >> 12) & 63];
        out += kB64[(v >> 6) & 63];
        out += kB64[v & 63];
    }
    const std::size_t rest = in.size() - i;
    if (rest > 0) {
        std::uint32_t v = static_cast<std::uint32_t>(static_cast<unsigned char>(in[i])) << 16;
        if (rest == 2) v |= static_cast<std::uint32_t>(static_cast<unsigned char>(in[i + 1])) << 8;
        out += kB64[v >> 18];
        out += kB64[(v >> 12) & 63];
        out += rest == 2 ? kB64[(v >> 6) & 63] : '=';
        out += '=';
    }
    return out;
}

std::string base64_decode(std::string_view in) {
    static const std::array<int, 256> value = [] {
        std::array<int, 256> v{};
        v.fill(-1);
        for (int k = 0; k < 64; ++k) v[static_cast<unsigned char>(kB64[k])] = k;
        return v;
    }();
    if (in.size() % 4 != 0)
        throw Error("base64 text of " + std::to_string(in.size()) + " characters is not a multiple of 4");
    std::string out;
    out.reserve(in.size() / 4 * 3);
    for (std::size_t i = 0; i < in.size(); i += 4) {
        int q[4];
        int pad = 0;
        for (int k = 0; k < 4; ++k) {
            const char c = in[i + static_cast<std::size_t>(k)];
            const bool last_group = i + 4 == in.size();
            if (c == '=' && last_group && k >= 2) {
                q[k] = 0;
                ++pad;
                continue;
            }
            q[k] = value[static_cast<unsigned char>(c)];
            if (q[k] < 0 || pad > 0)
                throw Error("'" + std::string(1, c) + "' at character " + std::to_string(i + k + 1) + " is not base64");
        }
        const std::uint32_t v = (static_cast<std::uint32_t>(q[0]) << 18) | (static_cast<std::uint32_t>(q[1]) << 12) |
                                (static_cast<std::uint32_t>(q[2]) << 6) | static_cast<std::uint32_t>(q[3]);
        out += static_cast<char>(v >> 16);
        if (pad < 2) out += static_cast<char>((v >> 8) & 0xff);
        if (pad < 1) out += static_cast<char>(v & 0xff);
    }
    return out;
}

// ---- 2. Writing rows -------------------------------------------------------

namespace {

constexpr const char* kColumns[] = {"uid",
                                    "started_at",
                                    "drill",
                                    "kind",
                                    "target",
                                    "target_name",
                                    "root_hz",
                                    "performer",
                                    "dur_s",
                                    "locked",
                                    "time_to_lock_s",
                                    "mean_dev_cents",
                                    "spread_cents",
                                    "in_tolerance_share",
                                    "threshold_cents",
                                    "trials",
                                    "correct_share",
                                    "method",
                                    "estimate",
                                    "threshold_lo_cents",
                                    "threshold_hi_cents",
                                    "settings",
                                    "trace"};
// Columns an older export (schema 2) lacks: an import takes it without them.
bool optional_column(std::string_view c) {
    return c == "trace" || c == "method" || c == "estimate" || c == "threshold_lo_cents" || c == "threshold_hi_cents";
}
constexpr std::size_t kColumnCount = std::size(kColumns);

void add_field(std::string& out, std::string_view v) {
    if (v.find_first_of(",\"\r\n") == std::string_view::npos) {
        out.append(v);
        return;
    }
    out += '"';
    for (char c : v) {
        if (c == '"') out += '"';
        out += c;
    }
    out += '"';
}

}  // namespace

std::string csv_field(std::string_view v) {
    std::string out;
    add_field(out, v);
    return out;
}

namespace {

void add_number(std::string& out, double v) {
    if (!std::isfinite(v)) return;
    char buf[32];
    const auto r = std::to_chars(buf, buf + sizeof buf, v);  // shortest round-trip form
    out.append(buf, r.ptr);
}

}  // namespace

std::string csv_header(bool with_trace) {
    std::string h;
    for (std::size_t i = 0; i < kColumnCount - (with_trace ? 0 : 1); ++i) {
        if (i) h += ',';
        h += kColumns[i];
    }
    return h + "\n";
}

void append_csv_row(std::string& out, const Attempt& a, bool with_trace) {
    const std::string_view kind = kind_name(a.kind);
    const std::string_view texts[] = {a.uid, a.started_at, a.drill, kind, a.target, a.target_name};
    for (std::string_view t : texts) {
        add_field(out, t);
        out += ',';
    }
    add_number(out, a.root_hz);
    out += ',';
    add_field(out, a.performer);
    out += ',';
    add_number(out, a.dur_s);
    out += ',';
    if (a.locked) out += *a.locked ? '1' : '0';
    for (double v : {a.time_to_lock_s, a.mean_dev_cents, a.spread_cents, a.in_tolerance_share, a.threshold_cents}) {
        out += ',';
        add_number(out, v);
    }
    out += ',';
    if (a.trials) out += std::to_string(*a.trials);
    out += ',';
    add_number(out, a.correct_share);
    for (std::string_view t : {std::string_view(a.method), std::string_view(a.estimate)}) {
        out += ',';
        add_field(out, t);
    }
    for (double v : {a.threshold_lo_cents, a.threshold_hi_cents}) {
        out += ',';
        add_number(out, v);
    }
    out += ',';
    add_field(out, a.settings_json);
    if (with_trace) {
        out += ',';
        out += base64_encode(encode_trace(a.trace));
    }
    out += '\n';
}

std::size_t export_csv(const PracticeLog& log, const AttemptFilter& filter, bool with_trace, std::ostream& out) {
    out << csv_header(with_trace);
    std::size_t n = 0;
    std::string row;
    log.for_each(filter, with_trace, [&](const Attempt& a) {
        row.clear();
        append_csv_row(row, a, with_trace);
        out << row;
        ++n;
    });
    return n;
}

std::string attempts_csv(const std::vector<Attempt>& attempts, bool with_trace) {
    std::string out = csv_header(with_trace);
    for (const Attempt& a : attempts) append_csv_row(out, a, with_trace);
    return out;
}

// ---- 3. Reading records ----------------------------------------------------

namespace {

struct Record {
    std::size_t line = 0;  // line where the record starts
    std::vector<std::string> fields;
};

// Splits RFC 4180 text into records; throws Error "source:LINE: ..." on an
// unterminated quote or text after a closing quote.
std::vector<Record> split_records(std::string_view text, const std::string& source) {
    std::vector<Record> out;
    std::size_t line = 1;
    std::size_t i = 0;
    if (text.substr(0, 3) == "\xEF\xBB\xBF") i = 3;  // a UTF-8 byte order mark from a spreadsheet
    while (i < text.size()) {
        Record rec;
        rec.line = line;
        std::string field;
        for (;;) {
            if (i < text.size() && text[i] == '"') {
                const std::size_t quote_line = line;
                ++i;
                for (;;) {
                    if (i >= text.size())
                        throw Error(source + ":" + std::to_string(quote_line) + ": a quoted field is never closed");
                    if (text[i] == '"') {
                        if (i + 1 < text.size() && text[i + 1] == '"') {
                            field += '"';
                            i += 2;
                            continue;
                        }
                        ++i;
                        break;
                    }
                    if (text[i] == '\n') ++line;
                    field += text[i++];
                }
                if (i < text.size() && text[i] != ',' && text[i] != '\n' && text[i] != '\r')
                    throw Error(source + ":" + std::to_string(line) + ": text after a closing quote");
            } else {
                while (i < text.size() && text[i] != ',' && text[i] != '\n' && text[i] != '\r') {
                    if (text[i] == '"')
                        throw Error(source + ":" + std::to_string(line) + ": a quote inside an unquoted field");
                    field += text[i++];
                }
            }
            rec.fields.push_back(std::move(field));
            field.clear();
            if (i < text.size() && text[i] == ',') {
                ++i;
                continue;
            }
            if (i < text.size() && text[i] == '\r') ++i;
            if (i < text.size() && text[i] == '\n') ++i;
            ++line;
            break;
        }
        const bool blank = rec.fields.size() == 1 && rec.fields[0].empty();
        if (!blank) out.push_back(std::move(rec));
    }
    return out;
}

// ---- 4. Checking fields and importing -------------------------------------

struct Row {
    const Record& rec;
    const std::map<std::string, std::size_t>& col;
    const std::string& source;

    std::string where() const { return source + ":" + std::to_string(rec.line) + ": "; }
    [[noreturn]] void bad(const std::string& column, const std::string& why) const {
        throw Error(where() + column + " " + why);
    }
    const std::string& text(const std::string& column) const { return rec.fields[col.at(column)]; }
    bool has(const std::string& column) const { return col.count(column) > 0; }

    double number(const std::string& column, double lo, double hi) const {
        const std::string& t = text(column);
        if (t.empty()) return NAN;
        double v = 0.0;
        const auto r = std::from_chars(t.data(), t.data() + t.size(), v);
        if (r.ec != std::errc() || r.ptr != t.data() + t.size() || !std::isfinite(v))
            bad(column, pitch::quote(t) + " is not a number");
        if (v < lo || v > hi)
            bad(column,
                t + " is out of range (" + pitch::format_trimmed(lo, 3) + " to " + pitch::format_trimmed(hi, 3) + ")");
        return v;
    }
};

void check_interval(const Row& r, const std::string& column, const std::string& text) {
    try {
        (void)pitch::parse_interval(text);
    } catch (const Error& e) {
        r.bad(column, std::string("has a bad target: ") + e.what());
    }
}

Attempt parse_row(const Row& r, const PracticeLog& checker) {
    Attempt a;
    a.uid = r.text("uid");
    if (!a.uid.empty() && !is_uid(a.uid)) r.bad("uid", pitch::quote(a.uid) + " is not 32 lowercase hex digits");
    a.started_at = r.text("started_at");
    if (!is_utc_iso8601(a.started_at))
        r.bad("started_at", pitch::quote(a.started_at) + " is not a UTC time like 2025-03-01T14:03:22.123Z");
    a.drill = r.text("drill");
    if (a.drill.empty()) r.bad("drill", "is empty");
    const auto kind = parse_kind(r.text("kind"));
    if (!kind) r.bad("kind", pitch::quote(r.text("kind")) + " is neither hold nor ear");
    a.kind = *kind;
    a.target = r.text("target");
    if (a.target.empty()) r.bad("target", "is empty");
    if (a.kind == AttemptKind::hold) {
        check_interval(r, "target", a.target);
    } else {
        std::size_t start = 0;
        while (start < a.target.size()) {
            const std::size_t sp = a.target.find(' ', start);
            const std::string part = a.target.substr(start, sp == std::string::npos ? std::string::npos : sp - start);
            check_interval(r, "target", part);
            if (sp == std::string::npos) break;
            start = sp + 1;
        }
    }
    a.target_name = r.text("target_name");
    a.root_hz = r.number("root_hz", 1.0, 20000.0);
    a.performer = r.text("performer");
    a.dur_s = r.number("dur_s", 0.0, 86400.0);
    const std::string& locked = r.text("locked");
    if (locked == "1")
        a.locked = true;
    else if (locked == "0")
        a.locked = false;
    else if (!locked.empty())
        r.bad("locked", pitch::quote(locked) + " must be 1, 0 or empty");
    a.time_to_lock_s = r.number("time_to_lock_s", 0.0, 86400.0);
    a.mean_dev_cents = r.number("mean_dev_cents", -2400.0, 2400.0);
    a.spread_cents = r.number("spread_cents", 0.0, 2400.0);
    a.in_tolerance_share = r.number("in_tolerance_share", 0.0, 1.0);
    a.threshold_cents = r.number("threshold_cents", 0.0, 2400.0);
    const double trials = r.number("trials", 0.0, 1e6);
    if (std::isfinite(trials)) {
        if (trials != std::floor(trials)) r.bad("trials", r.text("trials") + " is not a whole number");
        a.trials = static_cast<int>(trials);
    }
    a.correct_share = r.number("correct_share", 0.0, 1.0);
    if (r.has("method")) a.method = r.text("method");
    if (r.has("estimate")) {
        a.estimate = r.text("estimate");
        if (!a.estimate.empty() && a.estimate != "measured" && a.estimate != "finer" && a.estimate != "none")
            r.bad("estimate", pitch::quote(a.estimate) + " must be measured, finer, none or empty");
    }
    if (r.has("threshold_lo_cents")) a.threshold_lo_cents = r.number("threshold_lo_cents", 0.0, 2400.0);
    if (r.has("threshold_hi_cents")) a.threshold_hi_cents = r.number("threshold_hi_cents", 0.0, 2400.0);
    a.settings_json = r.text("settings");
    if (a.settings_json.empty()) a.settings_json = "{}";
    if (!checker.is_json_object(a.settings_json)) r.bad("settings", "is not a JSON object");
    if (r.has("trace") && !r.text("trace").empty()) {
        try {
            const std::string blob = base64_decode(r.text("trace"));
            a.trace = decode_trace(blob.data(), blob.size());
        } catch (const Error& e) {
            r.bad("trace", std::string("is not a trace: ") + e.what());
        }
    }
    return a;
}

}  // namespace

std::string content_uid(std::string_view content) {
    __extension__ typedef unsigned __int128 u128;  // GCC and Clang
    const u128 prime = (u128{1} << 88) | 0x13b;    // 2^88 + 2^8 + 0x3b
    u128 h = (u128{0x6c62272e07bb0142ULL} << 64) | 0x62b821756295c58dULL;
    for (const char c : content) {
        h ^= static_cast<unsigned char>(c);
        h *= prime;
    }
    char buf[33];
    std::snprintf(buf, sizeof buf, "%016llx%016llx", static_cast<unsigned long long>(h >> 64),
                  static_cast<unsigned long long>(h));
    return buf;
}

std::vector<Attempt> parse_log_csv(std::string_view text, const std::string& source, const PracticeLog& checker) {
    const std::vector<Record> records = split_records(text, source);
    if (records.empty()) throw Error(source + ": empty file, expected a header row starting with 'uid,started_at'");
    std::map<std::string, std::size_t> col;
    const Record& header = records.front();
    for (std::size_t i = 0; i < header.fields.size(); ++i) {
        const std::string& name = header.fields[i];
        if (std::find(std::begin(kColumns), std::end(kColumns), name) == std::end(kColumns))
            throw Error(source + ":" + std::to_string(header.line) + ": unknown column " + pitch::quote(name) +
                        " (is this a practice log export?)");
        if (!col.emplace(name, i).second)
            throw Error(source + ":" + std::to_string(header.line) + ": column " + pitch::quote(name) +
                        " appears twice");
    }
    for (const char* need : kColumns)
        if (!optional_column(need) && !col.count(need))
            throw Error(source + ":" + std::to_string(header.line) + ": missing column '" + need + "'");

    std::vector<Attempt> out;
    std::set<std::string> uids;
    for (std::size_t k = 1; k < records.size(); ++k) {
        const Record& rec = records[k];
        const Row row{rec, col, source};
        if (rec.fields.size() != header.fields.size())
            throw Error(row.where() + std::to_string(rec.fields.size()) + " fields, the header has " +
                        std::to_string(header.fields.size()));
        Attempt a = parse_row(row, checker);
        if (!a.uid.empty() && !uids.insert(a.uid).second) row.bad("uid", a.uid + " appears twice in the file");
        if (a.uid.empty()) {
            // Every other column, by name (so column order does not matter), each field length-prefixed.
            std::string content;
            for (const auto& [name, i] : col)
                if (name != "uid") content += name + ':' + std::to_string(rec.fields[i].size()) + ':' + rec.fields[i];
            a.uid = content_uid(content);
        }
        out.push_back(std::move(a));
    }
    return out;
}

ImportResult import_csv(PracticeLog& log, std::string_view text, const std::string& source) {
    std::vector<Attempt> attempts = parse_log_csv(text, source, log);
    ImportResult r;
    r.rows = attempts.size();
    r.added = log.add_all(attempts);
    r.skipped = r.rows - r.added;
    return r;
}

}  // namespace beatless::ui
