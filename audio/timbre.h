// Timbres — our own partial recipes for the drone and practice tones, from a calm pure tone to a bright one in
// which the beating of any mistuned interval is easy to hear.
// Method: fixed amplitude tables (the recipes beside Timbre), each normalised to the RMS of a unit sine.
// Thread: any. Allocates: timbre_partials' vector only (timbre_partials_into is fit for the audio callback).
#pragma once

#include <cstddef>
#include <span>
#include <string>
#include <string_view>
#include <vector>

namespace beatless::audio {

// pure    the fundamental alone (no partials to beat against, for a calm reference)
// soft    6 partials falling 12 dB per octave
// round   12 partials falling about 9 dB per octave
// bright  32 partials falling 6 dB per octave (sawtooth-like spectrum)
// hollow  odd partials strong, even partials weak (clarinet-like idea)
// Amplitudes are normalised so every timbre has the RMS of a unit sine; levels are then set in dBFS.
enum class Timbre { pure, soft, round, bright, hollow };

std::vector<double> timbre_partials(Timbre t);  // a_1, a_2, ... with RMS of a unit sine
constexpr std::size_t kMaxTimbrePartials = 32;  // the most partials any timbre has
// The same amplitudes into out (at least kMaxTimbrePartials long); returns the
// count. Thread: any, including the audio callback. Allocates: no.
std::size_t timbre_partials_into(Timbre t, std::span<double> out) noexcept;
// The highest partial number the timbre sounds (1 for pure, 32 for bright):
// what pitch::AudibleRange::partials_a needs. Allocates: no.
int timbre_highest_partial(Timbre t) noexcept;
Timbre parse_timbre(std::string_view name);  // throws Error listing the names
std::string_view timbre_name(Timbre t);
const std::vector<Timbre>& all_timbres();

}  // namespace beatless::audio
