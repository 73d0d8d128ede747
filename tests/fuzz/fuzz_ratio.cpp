// libFuzzer target: the interval, chord and frequency parsers must either
// succeed or throw beatless::Error, never crash, hang or hit UB.
#include "pitch/base/error.h"
#include "pitch/theory/interval.h"
#include "pitch/theory/notes.h"
#include "pitch/theory/ratio.h"

#include <cmath>
#include <cstddef>
#include <cstdint>
#include <cstdlib>
#include <string_view>

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
    const std::string_view text(reinterpret_cast<const char*>(data), size);
    using namespace beatless;
    try {
        const pitch::Interval iv = pitch::parse_interval(text);
        if (!std::isfinite(iv.cents())) std::abort();
        if (iv.is_ratio()) {
            const pitch::Ratio r = iv.ratio();
            if (r.num <= 0 || r.den <= 0) std::abort();
            (void)pitch::prime_limit(r);
            (void)pitch::octave_reduce(r);
        }
    } catch (const Error&) {}
    try {
        for (auto t : pitch::parse_chord_terms(text))
            if (t <= 0) std::abort();
    } catch (const Error&) {}
    try {
        const double hz = pitch::parse_frequency(text);
        if (!(hz >= 1.0 && hz <= 20000.0)) std::abort();
    } catch (const Error&) {}
    return 0;
}
