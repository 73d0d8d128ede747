#include "pitch/theory/ratio.h"

#include "pitch/base/error.h"
#include "pitch/base/text.h"

#include <algorithm>
#include <charconv>
#include <cmath>
#include <numeric>

namespace beatless::pitch {

namespace {

__extension__ using u128 = unsigned __int128;

[[noreturn]] void fail(std::string_view text, std::string_view problem) {
    throw Error(quote(text) + ": " + std::string(problem));
}

std::uint64_t mul_mod(std::uint64_t a, std::uint64_t b, std::uint64_t m) {
    return static_cast<std::uint64_t>(static_cast<u128>(a) * b % m);
}

std::uint64_t pow_mod(std::uint64_t b, std::uint64_t e, std::uint64_t m) {
    std::uint64_t r = 1;
    b %= m;
    while (e) {
        if (e & 1) r = mul_mod(r, b, m);
        b = mul_mod(b, b, m);
        e >>= 1;
    }
    return r;
}

// Deterministic Miller-Rabin for all 64-bit n (bases from Jaeschke 1993 and
// later searches: the first 12 primes suffice below 3.3e24).
bool is_prime(std::uint64_t n) {
    if (n < 2) return false;
    for (std::uint64_t p : {2ull, 3ull, 5ull, 7ull, 11ull, 13ull, 17ull, 19ull, 23ull, 29ull, 31ull, 37ull}) {
        if (n % p == 0) return n == p;
    }
    std::uint64_t d = n - 1;
    int s = 0;
    while ((d & 1) == 0) {
        d >>= 1;
        ++s;
    }
    for (std::uint64_t a : {2ull, 3ull, 5ull, 7ull, 11ull, 13ull, 17ull, 19ull, 23ull, 29ull, 31ull, 37ull}) {
        std::uint64_t x = pow_mod(a, d, n);
        if (x == 1 || x == n - 1) continue;
        bool composite = true;
        for (int r = 1; r < s; ++r) {
            x = mul_mod(x, x, n);
            if (x == n - 1) {
                composite = false;
                break;
            }
        }
        if (composite) return false;
    }
    return true;
}

// Pollard's rho with Brent's cycle detection; n must be composite and odd.
std::uint64_t find_factor(std::uint64_t n) {
    for (std::uint64_t c = 1;; ++c) {
        auto f = [&](std::uint64_t x) { return (mul_mod(x, x, n) + c) % n; };
        std::uint64_t x = 2, y = 2, d = 1;
        while (d == 1) {
            x = f(x);
            y = f(f(y));
            d = std::gcd(x > y ? x - y : y - x, n);
        }
        if (d != n) return d;
    }
}

std::uint64_t largest_prime(std::uint64_t n) {
    if (n < 2) return 1;
    std::uint64_t best = 1;
    for (std::uint64_t p = 2; p < 1000 && p * p <= n; ++p) {
        while (n % p == 0) {
            best = p;
            n /= p;
        }
    }
    if (n == 1) return best;
    if (is_prime(n)) return std::max(best, n);
    std::uint64_t d = find_factor(n);
    return std::max({best, largest_prime(d), largest_prime(n / d)});
}

std::int64_t parse_count(std::string_view whole, std::string_view digits) {
    if (digits.empty()) fail(whole, "not a ratio (expected a form such as 7/5, 7:5, 3/2*5/4 or 600c)");
    if (digits.front() == '-') fail(whole, "ratio must be positive (a negative number is not an interval)");
    std::int64_t v = 0;
    auto [end, ec] = std::from_chars(digits.data(), digits.data() + digits.size(), v);
    if (ec == std::errc::result_out_of_range) fail(whole, "number too large for 64-bit ratio arithmetic");
    if (ec != std::errc() || end != digits.data() + digits.size())
        fail(whole, "not a ratio (expected a form such as 7/5, 7:5, 3/2*5/4 or 600c)");
    return v;
}

Ratio parse_single(std::string_view whole, std::string_view part) {
    part = trim(part);
    const auto sep = part.find_first_of("/:");
    if (sep == std::string_view::npos) {
        const std::int64_t n = parse_count(whole, part);
        if (n == 0) fail(whole, "ratio must be positive (zero is not an interval)");
        return Ratio::make(n, 1);
    }
    if (part.find_first_of("/:", sep + 1) != std::string_view::npos)
        fail(whole, "has more than two terms; a chord such as 4:5:6 is not a single interval");
    const std::int64_t n = parse_count(whole, trim(part.substr(0, sep)));
    const std::int64_t d = parse_count(whole, trim(part.substr(sep + 1)));
    if (d == 0) fail(whole, "denominator is zero");
    if (n == 0) fail(whole, "ratio must be positive (zero is not an interval)");
    return Ratio::make(n, d);
}

}  // namespace

Ratio Ratio::make(std::int64_t n, std::int64_t d) {
    if (d == 0) throw Error(std::to_string(n) + "/0: denominator is zero");
    if (n <= 0 || d < 0) throw Error(std::to_string(n) + "/" + std::to_string(d) + ": ratio must be positive");
    const std::int64_t g = std::gcd(n, d);
    return Ratio{n / g, d / g};
}

double Ratio::cents() const {
    return 1200.0 *
           static_cast<double>(std::log2(static_cast<long double>(num)) - std::log2(static_cast<long double>(den)));
}

std::string Ratio::str() const { return std::to_string(num) + "/" + std::to_string(den); }

std::int64_t checked_mul(std::int64_t a, std::int64_t b, std::string_view what) {
    std::int64_t r = 0;
    if (__builtin_mul_overflow(a, b, &r))
        throw Error(std::string(what) + ": result too large for 64-bit ratio arithmetic");
    return r;
}

Ratio operator*(const Ratio& a, const Ratio& b) {
    const std::int64_t g1 = std::gcd(a.num, b.den);
    const std::int64_t g2 = std::gcd(b.num, a.den);
    const std::string what = a.str() + "*" + b.str();
    return Ratio{checked_mul(a.num / g1, b.num / g2, what), checked_mul(a.den / g2, b.den / g1, what)};
}

Ratio operator/(const Ratio& a, const Ratio& b) { return a * invert(b); }

Ratio invert(const Ratio& r) { return Ratio{r.den, r.num}; }

Ratio octave_reduce(const Ratio& r) {
    Ratio x = r;
    const std::string what = "octave reduction of " + r.str();
    while (x.num / 2 >= x.den) {  // x >= 2, without forming 2 * den
        if (x.num % 2 == 0)
            x.num /= 2;
        else
            x.den = checked_mul(x.den, 2, what);
    }
    while (x.num < x.den) {
        if (x.den % 2 == 0)
            x.den /= 2;
        else
            x.num = checked_mul(x.num, 2, what);
    }
    return x;
}

Ratio parse_ratio(std::string_view text) {
    const std::string_view t = trim(text);
    if (t.empty()) fail(text, "empty ratio");
    Ratio acc;
    for_each_part(t, '*', [&](std::string_view part) { acc = acc * parse_single(text, part); });
    return acc;
}

std::vector<std::int64_t> parse_chord_terms(std::string_view text) {
    const std::string_view t = trim(text);
    std::vector<std::int64_t> terms;
    for_each_part(t, ':', [&](std::string_view part) {
        const std::int64_t v = parse_count(text, trim(part));
        if (v == 0) fail(text, "chord terms must be positive");
        terms.push_back(v);
    });
    if (terms.size() < 2) fail(text, "a chord needs at least two terms, as in 4:5:6");
    return terms;
}

std::int64_t largest_prime_factor(std::int64_t n) {
    if (n < 1) throw Error(std::to_string(n) + ": prime factors need a positive number");
    return static_cast<std::int64_t>(largest_prime(static_cast<std::uint64_t>(n)));
}

int prime_limit(const Ratio& r) {
    return static_cast<int>(std::max(largest_prime_factor(r.num), largest_prime_factor(r.den)));
}

std::int64_t odd_limit(const Ratio& r) {
    auto odd = [](std::int64_t v) {
        while (v % 2 == 0) v /= 2;
        return v;
    };
    return std::max(odd(r.num), odd(r.den));
}

double tenney_height(const Ratio& r) {
    return static_cast<double>(std::log2(static_cast<long double>(r.num)) + std::log2(static_cast<long double>(r.den)));
}

}  // namespace beatless::pitch
