#include "ui/session/json.h"

#include "pitch/base/text.h"

#include <cmath>
#include <cstdio>

namespace beatless::ui {

std::string json_escape(std::string_view s) {
    std::string o;
    o.reserve(s.size() + 2);
    for (const char c : s) {
        switch (c) {
            case '"': o += "\\\""; break;
            case '\\': o += "\\\\"; break;
            case '\n': o += "\\n"; break;
            case '\r': o += "\\r"; break;
            case '\t': o += "\\t"; break;
            default:
                if (static_cast<unsigned char>(c) < 0x20) {
                    char buf[8];
                    std::snprintf(buf, sizeof buf, "\\u%04x", static_cast<unsigned>(static_cast<unsigned char>(c)));
                    o += buf;
                } else {
                    o += c;
                }
        }
    }
    return o;
}

void JsonWriter::separate() {
    if (after_key_) {
        after_key_ = false;
        return;
    }
    if (!first_.empty()) {
        if (!first_.back()) out_ += ", ";
        first_.back() = false;
    }
}

JsonWriter& JsonWriter::begin_object() {
    separate();
    out_ += '{';
    first_.push_back(true);
    return *this;
}

JsonWriter& JsonWriter::end_object() {
    out_ += '}';
    first_.pop_back();
    return *this;
}

JsonWriter& JsonWriter::begin_array() {
    separate();
    out_ += '[';
    first_.push_back(true);
    return *this;
}

JsonWriter& JsonWriter::end_array() {
    out_ += ']';
    first_.pop_back();
    return *this;
}

JsonWriter& JsonWriter::key(std::string_view k) {
    separate();
    out_ += '"';
    out_ += json_escape(k);
    out_ += "\": ";
    after_key_ = true;
    return *this;
}

JsonWriter& JsonWriter::value(std::string_view s) {
    separate();
    out_ += '"';
    out_ += json_escape(s);
    out_ += '"';
    return *this;
}

JsonWriter& JsonWriter::value(double v, int decimals) {
    if (!std::isfinite(v)) return null();
    separate();
    out_ += pitch::format_trimmed(v, decimals);
    return *this;
}

JsonWriter& JsonWriter::value(std::int64_t v) {
    separate();
    out_ += std::to_string(v);
    return *this;
}

JsonWriter& JsonWriter::value(bool b) {
    separate();
    out_ += b ? "true" : "false";
    return *this;
}

JsonWriter& JsonWriter::null() {
    separate();
    out_ += "null";
    return *this;
}

void JsonWriter::clear() {
    out_.clear();
    first_.clear();
    after_key_ = false;
}

}  // namespace beatless::ui
