// libFuzzer target: drift progressions ("I vi ii V I", "1/1:4:5:6 16/9:4:5:6"),
// keys ("Eb3", "A minor") and tonics must parse or throw beatless::Error.
#include "pitch/base/error.h"
#include "pitch/theory/progression.h"
#include "pitch/theory/spelling.h"

#include <cmath>
#include <cstddef>
#include <cstdint>
#include <cstdlib>
#include <string_view>

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
    using namespace beatless;
    const std::string_view text(reinterpret_cast<const char*>(data), size);
    try {
        const pitch::Progression p = pitch::parse_progression(text);
        for (const auto rule : {pitch::DriftRule::common_tones, pitch::DriftRule::fixed_root}) {
            const auto t = pitch::tune_progression(p, rule);
            if (!std::isfinite(t.drift_cents)) std::abort();
        }
    } catch (const Error&) {}
    try {
        const pitch::Key k = pitch::parse_key(text, 440.0);
        if (!(k.tonic_hz > 0.0) || !std::isfinite(k.tonic_hz)) std::abort();
    } catch (const Error&) {}
    try {
        (void)pitch::parse_tonic(text);
    } catch (const Error&) {}
    return 0;
}
