// Timbres — partial recipes for the drone and practice tones.
//
// Our own set, from a pure tone (no partials to beat against, for a calm
// reference) to a bright many-partial tone in which the beating of any
// mistuned interval is easy to hear. Amplitudes are normalised so every
// timbre has the RMS of a unit sine; levels are then set in dBFS.
//   pure    the fundamental alone
//   soft    6 partials falling 12 dB per octave
//   round   12 partials falling about 9 dB per octave
//   bright  32 partials falling 6 dB per octave (sawtooth-like spectrum)
//   hollow  odd partials strong, even partials weak (clarinet-like idea)
#pragma once

#include <cstddef>
#include <span>
#include <string>
#include <string_view>
#include <vector>

namespace beatless::audio {

enum class Timbre { pure, soft, round, bright, hollow };

std::vector<double> timbre_partials(Timbre t);     // a_1, a_2, ... with RMS of a unit sine
constexpr std::size_t kMaxTimbrePartials = 32;      // the most partials any timbre has
// The same amplitudes into out (at least kMaxTimbrePartials long); returns the
// count. Thread: any, including the audio callback. Allocates: no.
std::size_t timbre_partials_into(Timbre t, std::span<double> out) noexcept;
// The highest partial number the timbre sounds (1 for pure, 32 for bright):
// what pitch::AudibleRange::partials_a needs. Allocates: no.
int timbre_highest_partial(Timbre t) noexcept;
Timbre parse_timbre(std::string_view name);         // throws Error listing the names
std::string_view timbre_name(Timbre t);
const std::vector<Timbre>& all_timbres();

}  // namespace beatless::audio
