// Interval — a target interval above (or below) the root: an exact ratio (7/5) or, for irrational targets of
// practice such as the equal-tempered tritone, cents ("600c"); and its facts.
// Method: cents = 1200 log2(p/q) (Ellis's cent, 1885); limits, Tenney height and 12-TET step beside IntervalFacts.
// Thread: any; pure functions. Allocates: the strings it returns.
#pragma once

#include "pitch/theory/ratio.h"

#include <optional>
#include <string>
#include <string_view>
#include <unordered_map>

namespace beatless::pitch {

class Interval {
public:
    Interval() = default;  // unison 1/1
    static Interval of(const Ratio& r);
    static Interval from_cents(double cents);  // throws Error on NaN or infinity

    bool is_ratio() const { return is_ratio_; }
    const Ratio& ratio() const;  // valid only when is_ratio()
    double cents() const { return cents_; }
    double value() const;     // frequency ratio as a double
    std::string str() const;  // "7/5" or "600c"

    friend bool operator==(const Interval& a, const Interval& b) {
        return a.is_ratio_ == b.is_ratio_ && (a.is_ratio_ ? a.ratio_ == b.ratio_ : a.cents_ == b.cents_);
    }

private:
    bool is_ratio_ = true;
    Ratio ratio_{};
    double cents_ = 0.0;
};

// Accepts "7/5", "7:5", "3/2*5/4", "600c", "-35.5c" and products of the two ("3/2*600c" is 1301.955c).
Interval parse_interval(std::string_view text);  // throws Error naming the text
Interval operator*(const Interval& a, const Interval& b);

// Names of the trade for intervals ("septimal tritone"), keyed by Interval::str().
// Filled from targets/names.toml by the program; empty by default.
class IntervalNames {
public:
    void add(const Interval& iv, std::string name);
    const std::string* find(const Interval& iv) const;  // nullptr when unnamed
    // The name of iv, else the name of iv moved into the octave above the
    // root with the octaves said ("lesser septimal tritone + octave" for
    // 14/5); empty when neither is named.
    std::string name_in_any_octave(const Interval& iv) const;
    std::size_t size() const { return names_.size(); }

private:
    std::unordered_map<std::string, std::string> names_;
};

struct EtNearest {
    int step = 0;               // semitones above the root (nearest)
    double offset_cents = 0.0;  // interval minus step * 100 cents
};
EtNearest nearest_et_step(double cents);

// For a ratio p/q: cents = 1200 log2(p/q) (Ellis's cent, 1885); prime limit = largest prime factor of p*q;
// odd limit = max(odd part of p, odd part of q); Tenney height = log2(p*q); 12-TET step = the nearest multiple
// of 100 cents, and the offset from it.
struct IntervalFacts {
    std::string text;  // canonical "7/5" or "600c"
    double cents = 0.0;
    std::optional<int> prime_limit;         // empty for cents intervals
    std::optional<std::int64_t> odd_limit;  // empty for cents intervals
    std::optional<double> tenney_height;    // empty for cents intervals
    EtNearest et;
    std::string et_name;  // "tritone", "perfect fifth", ...
    std::string name;     // name of the trade, or empty
};
IntervalFacts interval_facts(const Interval& iv, const IntervalNames& names);

// Name of a 12-TET step (any number of semitones), e.g. 6 -> "tritone",
// 14 -> "major second + octave".
std::string et_step_name(int step);

// name + " + octave", " + 2 octaves", " - octave" ...; name itself for 0.
std::string with_octaves(std::string name, int octaves);

}  // namespace beatless::pitch
