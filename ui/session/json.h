// JsonWriter — a small streaming JSON writer for the commands' output.
//
// Keys and values are written in order; commas are placed automatically.
// Non-finite numbers are written as null, and numbers are rounded to the
// given number of decimals (trailing zeros dropped) so output stays readable
// and stable across platforms.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

namespace beatless::ui {

class JsonWriter {
public:
    JsonWriter& begin_object();
    JsonWriter& end_object();
    JsonWriter& begin_array();
    JsonWriter& end_array();
    JsonWriter& key(std::string_view k);
    JsonWriter& value(std::string_view s);
    JsonWriter& value(const char* s) { return value(std::string_view(s)); }
    JsonWriter& value(double v, int decimals = 6);
    JsonWriter& value(std::int64_t v);
    JsonWriter& value(int v) { return value(static_cast<std::int64_t>(v)); }
    JsonWriter& value(bool b);
    JsonWriter& null();
    template <class T>
    JsonWriter& value(const std::optional<T>& v) {
        return v ? value(*v) : null();
    }

    const std::string& str() const { return out_; }
    void clear();

private:
    void separate();
    std::string out_;
    std::vector<bool> first_;  // per open container: nothing written yet
    bool after_key_ = false;
};

std::string json_escape(std::string_view s);

}  // namespace beatless::ui
