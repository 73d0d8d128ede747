#include "pitch/theory/interval.h"

#include "pitch/base/error.h"
#include "pitch/base/text.h"

#include <array>
#include <cassert>
#include <cctype>
#include <charconv>
#include <cmath>
#include <cstdio>

namespace beatless::pitch {

Interval Interval::of(const Ratio& r) {
    Interval iv;
    iv.is_ratio_ = true;
    iv.ratio_ = r;
    iv.cents_ = r.cents();
    return iv;
}

Interval Interval::from_cents(double cents) {
    if (!std::isfinite(cents)) throw Error("cents value is not a finite number");
    Interval iv;
    iv.is_ratio_ = false;
    iv.cents_ = cents;
    return iv;
}

const Ratio& Interval::ratio() const {
    assert(is_ratio_ && "Interval::ratio() called on a cents interval");
    return ratio_;
}

double Interval::value() const { return is_ratio_ ? ratio_.value() : std::exp2(cents_ / 1200.0); }

std::string Interval::str() const { return is_ratio_ ? ratio_.str() : format_trimmed(cents_, 3) + "c"; }

namespace {

Interval parse_factor(std::string_view whole, std::string_view part) {
    part = trim(part);
    const bool numeric_start = !part.empty() && (std::isdigit(static_cast<unsigned char>(part[0])) || part[0] == '.' ||
                                                 part[0] == '-' || part[0] == '+');
    if (numeric_start && (part.back() == 'c' || part.back() == 'C')) {
        const std::string_view num = trim(part.substr(0, part.size() - 1));
        double v = 0.0;
        auto [end, ec] = std::from_chars(num.data(), num.data() + num.size(), v, std::chars_format::fixed);
        if (num.empty() || ec != std::errc() || end != num.data() + num.size() || !std::isfinite(v))
            throw Error(quote(whole) + ": not a cents value (expected a form such as 600c or 583.5c)");
        if (std::fabs(v) > 1.0e6) throw Error(quote(whole) + ": cents value out of range (more than 1,000,000 cents)");
        return Interval::from_cents(v);
    }
    return Interval::of(parse_ratio(part));
}

}  // namespace

Interval parse_interval(std::string_view text) {
    const std::string_view t = trim(text);
    if (t.empty()) throw Error("'': empty interval (expected a form such as 7/5, 7:5, 3/2*5/4 or 600c)");
    Interval acc;
    for_each_part(t, '*', [&](std::string_view part) { acc = acc * parse_factor(text, part); });
    return acc;
}

Interval operator*(const Interval& a, const Interval& b) {
    if (a.is_ratio() && b.is_ratio()) return Interval::of(a.ratio() * b.ratio());
    return Interval::from_cents(a.cents() + b.cents());
}

void IntervalNames::add(const Interval& iv, std::string name) { names_[iv.str()] = std::move(name); }

const std::string* IntervalNames::find(const Interval& iv) const {
    const auto it = names_.find(iv.str());
    return it == names_.end() ? nullptr : &it->second;
}

std::string IntervalNames::name_in_any_octave(const Interval& iv) const {
    if (const std::string* n = find(iv)) return *n;
    // Whole octaves above (k > 0) or below (k < 0) the octave [1/1, 2/1).
    const int k = static_cast<int>(std::floor(iv.cents() / 1200.0 + 1e-9));
    if (k == 0) return {};
    Interval within;
    if (iv.is_ratio()) {
        within = Interval::of(octave_reduce(iv.ratio()));
    } else {
        within = Interval::from_cents(iv.cents() - 1200.0 * k);
    }
    if (within.cents() < 1e-9) {  // 4/1, 8/1 ...: whole octaves
        if (k < 0) return {};
        return k == 1 ? std::string("octave") : std::to_string(k) + " octaves";
    }
    const std::string* n = find(within);
    return n ? with_octaves(*n, k) : std::string();
}

EtNearest nearest_et_step(double cents) {
    EtNearest e;
    e.step = static_cast<int>(std::lround(cents / 100.0));
    e.offset_cents = cents - 100.0 * e.step;
    return e;
}

std::string et_step_name(int step) {
    // Interval names of 12-tone equal temperament (common practice).
    static const std::array<const char*, 13> names = {
        "unison",        "minor second", "major second", "minor third",   "major third",   "perfect fourth", "tritone",
        "perfect fifth", "minor sixth",  "major sixth",  "minor seventh", "major seventh", "octave"};
    const int octaves = step >= 0 ? step / 12 : -((-step + 11) / 12);
    int within = step - 12 * octaves;
    if (within == 0 && octaves > 0) return octaves == 1 ? "octave" : std::to_string(octaves) + " octaves";
    return with_octaves(names[static_cast<std::size_t>(within)], octaves);
}

std::string with_octaves(std::string name, int octaves) {
    if (octaves == 0) return name;
    const int n = octaves > 0 ? octaves : -octaves;
    name += octaves > 0 ? " + " : " - ";
    name += n == 1 ? std::string("octave") : std::to_string(n) + " octaves";
    return name;
}

IntervalFacts interval_facts(const Interval& iv, const IntervalNames& names) {
    IntervalFacts f;
    f.text = iv.str();
    f.cents = iv.cents();
    if (iv.is_ratio()) {
        f.prime_limit = prime_limit(iv.ratio());
        f.odd_limit = odd_limit(iv.ratio());
        f.tenney_height = tenney_height(iv.ratio());
    }
    f.et = nearest_et_step(f.cents);
    f.et_name = et_step_name(f.et.step);
    f.name = names.name_in_any_octave(iv);
    return f;
}

}  // namespace beatless::pitch
