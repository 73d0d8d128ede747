// Ratio arithmetic, interval facts and cents values.
//
// Sources: cents by Ellis's definition, 1200*log2(p/q) (A. J. Ellis, "On the
// musical scales of various nations", J. Society of Arts 33, 1885). Cents of
// specific ratios are the values printed in published interval tables, to
// three decimals (from memory; tests/reference/check_ratio.py recomputes them
// with numpy as an independent check). Facts marked "common practice" are
// standard in just-intonation teaching with no single published source.
#include "pitch/base/error.h"
#include "pitch/theory/interval.h"
#include "pitch/theory/ratio.h"
#include "pitch/theory/targets.h"

#include <doctest/doctest.h>

#include <cmath>
#include <string>

using namespace beatless;
using namespace beatless::pitch;

namespace {
double cents_of(const char* s) { return parse_interval(s).cents(); }

std::string error_of(const char* s) {
    try {
        (void)parse_interval(s);
    } catch (const Error& e) {
        return e.what();
    }
    return "(no error)";
}
}  // namespace

TEST_CASE("cents of just intervals match published tables (to 0.0005 cent)") {
    CHECK(std::fabs(cents_of("7/5") - 582.512) < 5e-4);
    CHECK(std::fabs(cents_of("10/7") - 617.488) < 5e-4);
    CHECK(std::fabs(cents_of("11/8") - 551.318) < 5e-4);
    CHECK(std::fabs(cents_of("45/32") - 590.224) < 5e-4);
    CHECK(std::fabs(cents_of("729/512") - 611.730) < 5e-4);
    CHECK(std::fabs(cents_of("81/80") - 21.506) < 5e-4);
    CHECK(std::fabs(cents_of("50/49") - 34.976) < 5e-4);
    CHECK(std::fabs(cents_of("3/2") - 701.955) < 5e-4);
    CHECK(std::fabs(cents_of("5/4") - 386.314) < 5e-4);
    CHECK(std::fabs(cents_of("16/11") - 648.682) < 5e-4);
    CHECK(std::fabs(cents_of("2/1") - 1200.0) < 1e-9);
}

TEST_CASE("facts of the trade about the tritones (common practice)") {
    // 7/5 and 10/7 lie about 17.5 cents either side of 600 cents.
    CHECK(std::fabs(600.0 - cents_of("7/5") - 17.488) < 5e-4);
    CHECK(std::fabs(cents_of("10/7") - 600.0 - 17.488) < 5e-4);
    // Two 7/5 fall short of the octave by 50/49.
    const Ratio two_tritones = parse_ratio("7/5") * parse_ratio("7/5");
    CHECK(Ratio{2, 1} / two_tritones == Ratio{50, 49});
    // 45/32 and 729/512 differ by the syntonic comma 81/80.
    CHECK(parse_ratio("729/512") / parse_ratio("45/32") == Ratio{81, 80});
    // 15/11 lies about 39 cents above 4/3.
    CHECK(std::fabs(cents_of("15/11") - cents_of("4/3") - 38.906) < 5e-4);
    // 10/7 = 8/7 * 9/8 * 10/9 and 11/8 = 9/8 * 10/9 * 11/10.
    CHECK(parse_ratio("8/7*9/8*10/9") == Ratio{10, 7});
    CHECK(parse_ratio("9/8*10/9*11/10") == Ratio{11, 8});
    // 7/5 and 10/7 are inversions of each other within the octave.
    CHECK(octave_reduce(invert(parse_ratio("7/5"))) == Ratio{10, 7});
}

TEST_CASE("parsing the written forms") {
    CHECK(parse_ratio("7/5") == Ratio{7, 5});
    CHECK(parse_ratio("7:5") == Ratio{7, 5});
    CHECK(parse_ratio(" 14/10 ") == Ratio{7, 5});
    CHECK(parse_ratio("3/2*5/4") == Ratio{15, 8});
    CHECK(parse_ratio("3") == Ratio{3, 1});
    CHECK(parse_interval("600c").cents() == 600.0);
    CHECK_FALSE(parse_interval("600c").is_ratio());
    CHECK(parse_interval("583.5c").str() == "583.5c");
    CHECK(std::fabs(parse_interval("3/2*600c").cents() - 1301.955) < 5e-4);
    const auto chord = parse_chord_terms("4:5:6:7");
    REQUIRE(chord.size() == 4);
    CHECK(chord[3] == 7);
}

TEST_CASE("reduce, invert, octave-reduce, multiply, divide") {
    CHECK(Ratio::make(10, 4) == Ratio{5, 2});
    CHECK(invert(Ratio{7, 5}) == Ratio{5, 7});
    CHECK(octave_reduce(Ratio{7, 1}) == Ratio{7, 4});
    CHECK(octave_reduce(Ratio{5, 7}) == Ratio{10, 7});
    CHECK(octave_reduce(Ratio{2, 1}) == Ratio{1, 1});
    CHECK(Ratio{3, 2} * Ratio{4, 3} == Ratio{2, 1});
    CHECK(Ratio{3, 2} / Ratio{4, 3} == Ratio{9, 8});
    // 3^39 fits in 63 bits, 3^40 does not: the product must be refused, not wrapped.
    Ratio p{1, 1};
    for (int i = 0; i < 39; ++i) p = p * Ratio{3, 1};
    CHECK(p.num == 4052555153018976267LL);
    const Ratio three{3, 1};
    CHECK_THROWS_AS(p * three, Error);
}

TEST_CASE("prime limit, odd limit and Tenney height") {
    // Definitions: prime limit = largest prime factor of p*q; odd limit = largest
    // odd part; Tenney height = log2(p*q) (J. Tenney, "On 'Crystal Growth' in
    // Harmonic Space", 1983/1993). 7/5: log2(35) = 5.129.
    CHECK(prime_limit(Ratio{7, 5}) == 7);
    CHECK(odd_limit(Ratio{7, 5}) == 7);
    CHECK(std::fabs(tenney_height(Ratio{7, 5}) - 5.129) < 5e-4);
    CHECK(prime_limit(Ratio{45, 32}) == 5);
    CHECK(odd_limit(Ratio{45, 32}) == 45);
    CHECK(prime_limit(Ratio{729, 512}) == 3);
    CHECK(prime_limit(Ratio{16, 11}) == 11);
    CHECK(prime_limit(Ratio{1, 1}) == 1);
    CHECK(prime_limit(Ratio{2, 1}) == 2);
    // Large primes: 2^61 - 1 is a Mersenne prime; 1000003 * 1000033 is composite.
    CHECK(largest_prime_factor(2305843009213693951LL) == 2305843009213693951LL);
    CHECK(largest_prime_factor(1000003LL * 1000033LL) == 1000033);
}

TEST_CASE("nearest equal-tempered step and its offset") {
    const auto e = nearest_et_step(cents_of("7/5"));
    CHECK(e.step == 6);
    CHECK(std::fabs(e.offset_cents + 17.488) < 5e-4);
    CHECK(std::fabs(nearest_et_step(cents_of("5/4")).offset_cents + 13.686) < 5e-4);
    CHECK(et_step_name(6) == "tritone");
    CHECK(et_step_name(7) == "perfect fifth");
    // Compound intervals keep the simple name with the octaves said (common practice).
    CHECK(et_step_name(14) == "major second + octave");
    CHECK(et_step_name(24) == "2 octaves");
    CHECK(et_step_name(-6) == "tritone - octave");
}

TEST_CASE("names of the trade carry over to compound intervals") {
    // 14/5 = 7/5 * 2/1 and 24/11 = 12/11 * 2/1 (arithmetic); the names are
    // those of the simple intervals (common practice).
    IntervalNames names;
    names.add(parse_interval("7/5"), "lesser septimal tritone");
    names.add(parse_interval("12/11"), "undecimal neutral second");
    names.add(parse_interval("600c"), "equal-tempered tritone");
    CHECK(names.name_in_any_octave(parse_interval("7/5")) == "lesser septimal tritone");
    CHECK(names.name_in_any_octave(parse_interval("14/5")) == "lesser septimal tritone + octave");
    CHECK(names.name_in_any_octave(parse_interval("24/11")) == "undecimal neutral second + octave");
    CHECK(names.name_in_any_octave(parse_interval("48/11")) == "undecimal neutral second + 2 octaves");
    CHECK(names.name_in_any_octave(parse_interval("7/10")) == "lesser septimal tritone - octave");
    CHECK(names.name_in_any_octave(parse_interval("1800c")) == "equal-tempered tritone + octave");
    CHECK(names.name_in_any_octave(parse_interval("4/1")) == "2 octaves");
    CHECK(names.name_in_any_octave(parse_interval("11/8")).empty());
    CHECK(interval_facts(parse_interval("14/5"), names).name == "lesser septimal tritone + octave");

    // A target matched an octave up: the moved interval's own name if it has
    // one, else the target's name with the octave said.
    names.add(parse_interval("2/1"), "octave");
    const Target unison{parse_interval("1/1"), "unison"};
    CHECK(target_name_in_octave(unison, 1, names) == "octave");
    const Target neutral{parse_interval("12/11"), "undecimal neutral second"};
    CHECK(target_name_in_octave(neutral, 0, names) == "undecimal neutral second");
    CHECK(target_name_in_octave(neutral, 1, names) == "undecimal neutral second + octave");
    CHECK(target_name_in_octave(neutral, -1, names) == "undecimal neutral second - octave");
    CHECK(target_name_in_octave(Target{parse_interval("13/8"), ""}, 1, names).empty());
}

TEST_CASE("bad ratios give one-line messages naming the value") {
    CHECK(error_of("0/5") == "'0/5': ratio must be positive (zero is not an interval)");
    CHECK(error_of("7/0") == "'7/0': denominator is zero");
    CHECK(error_of("-7/5") == "'-7/5': ratio must be positive (a negative number is not an interval)");
    CHECK(error_of("abc") == "'abc': not a ratio (expected a form such as 7/5, 7:5, 3/2*5/4 or 600c)");
    CHECK(error_of("99999999999999999999/1") ==
          "'99999999999999999999/1': number too large for 64-bit ratio arithmetic");
    CHECK(error_of("") == "'': empty interval (expected a form such as 7/5, 7:5, 3/2*5/4 or 600c)");
    CHECK(error_of("4:5:6") == "'4:5:6': has more than two terms; a chord such as 4:5:6 is not a single interval");
    CHECK(error_of("nanc") == "'nanc': not a ratio (expected a form such as 7/5, 7:5, 3/2*5/4 or 600c)");
    CHECK(error_of("1.2.3c") == "'1.2.3c': not a cents value (expected a form such as 600c or 583.5c)");
}
