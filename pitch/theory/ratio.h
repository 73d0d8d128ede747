// Ratio — exact frequency ratios on 64-bit integers, kept in lowest terms.
// Method: checked integer arithmetic: every operation that could overflow 64 bits throws beatless::Error instead of
// wrapping. Texts: "7/5", "7:5", "7", "3/2*5/4" (parse_ratio); a chord "4:5:6:7" goes to parse_chord_terms.
// Thread: any. Allocates: only the strings and term lists it returns.
#pragma once

#include <cstdint>
#include <string>
#include <string_view>
#include <vector>

namespace beatless::pitch {

struct Ratio {
    std::int64_t num = 1;  // numerator, > 0
    std::int64_t den = 1;  // denominator, > 0, gcd(num, den) == 1

    // Reduces n/d to lowest terms; throws Error when d == 0 or either is <= 0.
    static Ratio make(std::int64_t n, std::int64_t d);

    double value() const { return static_cast<double>(num) / static_cast<double>(den); }
    double cents() const;     // 1200 * log2(num/den), computed without overflow
    std::string str() const;  // "7/5"; "2/1" for the octave

    friend bool operator==(const Ratio&, const Ratio&) = default;
};

Ratio operator*(const Ratio& a, const Ratio& b);  // throws Error on overflow
Ratio operator/(const Ratio& a, const Ratio& b);  // throws Error on overflow
Ratio invert(const Ratio& r);                     // q/p
Ratio octave_reduce(const Ratio& r);              // into [1/1, 2/1)

// Checked 64-bit helpers (throw Error naming `what` on overflow).
std::int64_t checked_mul(std::int64_t a, std::int64_t b, std::string_view what);

// Parses "7/5", "7:5", "7", "3/2*5/4"; throws Error with the text on failure.
Ratio parse_ratio(std::string_view text);

// Parses a chord such as "4:5:6:7" into its terms (at least two, all > 0).
std::vector<std::int64_t> parse_chord_terms(std::string_view text);

// Number theory on the ratio's terms.
int prime_limit(const Ratio& r);                    // largest prime in num*den; 1 for 1/1
std::int64_t odd_limit(const Ratio& r);             // max of the odd parts of num and den
double tenney_height(const Ratio& r);               // log2(num * den), without overflow
std::int64_t largest_prime_factor(std::int64_t n);  // n >= 1; 1 for n == 1

}  // namespace beatless::pitch
