// Chord — a just chord as exact ratios, its chart, and where players stand against a reference root.
// Method: voices as harmonic numbers of one fundamental; coinciding partials that beat when a voice is off (Helmholtz
// 1863, ch. VIII; pitch/theory/beats.h); the least-squares root derived in section 3.
// Thread: any; pure functions. Allocates: the values it returns (section 3: no).
// Index: 1 Chord and parsing · 2 Chart · 3 Reference roots and deviations.
#pragma once

#include "pitch/theory/beats.h"
#include "pitch/theory/notes.h"
#include "pitch/theory/ratio.h"

#include <cstdint>
#include <span>
#include <string>
#include <string_view>
#include <vector>

namespace beatless::pitch {

// ---------------------------------------------------------------------------
// [SECTION] Chord and parsing
// ---------------------------------------------------------------------------

constexpr std::size_t kMaxChordVoices = 16;
constexpr std::int64_t kMaxChordTerm = 1'000'000;  // largest term after common factors are removed

// A list of voices, each an exact ratio above the chord root, held as harmonic numbers ("terms") of one common
// fundamental: 4:5:6:7 is the 4th to 7th harmonics, and "1/1 5/4 3/2" is 4:5:6 with the root at term 4.
class Chord {
public:
    Chord() = default;  // empty; only useful as a placeholder

    // Terms of the harmonic series, strictly rising ("4:5:6"); the chord root
    // is the first term. Common factors are removed (8:10:12 is 4:5:6).
    // Throws Error when there are fewer than 2 or more than 16 terms, a term
    // is not positive or above kMaxChordTerm, or the terms do not rise.
    static Chord from_terms(std::vector<std::int64_t> terms);

    // Voices as ratios above a chord root 1/1, which need not sound itself
    // ("5/4 3/2 7/4"). Sorted from low to high; a repeated ratio throws Error,
    // and so does a term or root term above kMaxChordTerm.
    static Chord from_ratios(std::vector<Ratio> voices);

    std::size_t size() const { return terms_.size(); }
    const std::vector<std::int64_t>& terms() const { return terms_; }  // lowest terms
    std::int64_t root_term() const { return root_term_; }              // term of the chord root
    Ratio voice_ratio(std::size_t i) const;                            // terms[i] / root_term
    double voice_cents(std::size_t i) const { return cents_[i]; }      // 1200 log2 of the ratio
    std::string terms_text() const;                                    // "4:5:6:7"

private:
    std::vector<std::int64_t> terms_;
    std::int64_t root_term_ = 1;
    std::vector<double> cents_;
};

// "4:5:6:7" (terms), "1/1 5/4 3/2" or "1/1, 5/4, 3/2" (ratios above the
// root). Throws Error naming the text on failure.
Chord parse_chord(std::string_view text);

// ---------------------------------------------------------------------------
// [SECTION] Chart
// ---------------------------------------------------------------------------

struct ChartConfig {
    double a4_hz = kDefaultA4Hz;             // Hz, 400-480; default 440 (ISO 16)
    int max_harmonic = 16;                   // highest partial listed as coinciding; default 16
    AudibleRange audible{.partials_a = 16};  // voices sound up to the 16th partial; 4 kHz limit (pitch/theory/beats.h)
};

struct VoiceChart {
    Ratio ratio;            // above the chord root
    std::int64_t term = 0;  // harmonic number over the common fundamental
    double freq_hz = 0.0;
    double cents_from_root = 0.0;  // 1200 log2(ratio)
    NearestNote note;              // nearest 12-TET note and the offset from it (cents)
};

// Two voices a < b whose partials meet when the chord is just. With
// f_b / f_a = p/q in lowest terms, partial p of a meets partial q of b at
// p * f_a Hz. If b goes d cents off, the pair beats at q f_b |2^(d/1200) - 1|
// Hz, whose slope at d = 0 is q f_b ln2 / 1200 Hz per cent; moving a instead
// gives p f_a ln2 / 1200, the same number since p f_a = q f_b.
struct VoiceBeat {
    std::size_t voice_a = 0;        // lower voice (index)
    std::size_t voice_b = 0;        // upper voice (index)
    Ratio interval;                 // f_b / f_a
    PartialPair lowest;             // the lowest pair that meets (p, q)
    double beat_hz_per_cent = 0.0;  // of the lowest pair
    AudiblePair heard;              // the pair a listener hears beat (pitch/theory/beats.h, audible_pair): the headline
    double heard_hz_per_cent = NAN;       // its slope, q f_b ln2 / 1200 Hz per cent (NaN when none)
    std::vector<PartialPair> coinciding;  // every meeting pair up to max_harmonic (kp, kq), lowest first
};

struct ChordChart {
    double root_hz = 0.0;            // the chord root (1/1), sounding or not
    double fundamental_hz = 0.0;     // root_hz / root_term: the voices are its harmonics
    std::vector<VoiceChart> voices;  // low to high
    std::vector<VoiceBeat> beats;    // every two voices, (0,1), (0,2) ... (1,2) ...
};

// Per voice the frequency, the nearest 12-TET note and the cents from it (what a player bends by from their
// usual fingering), and for every two voices the coinciding partials that beat when one is off.
ChordChart chord_chart(const Chord& chord, double root_hz, const ChartConfig& config = {});

// Slope of a coinciding pair's beat rate: q * f_b * ln 2 / 1200 Hz per cent.
double beat_hz_per_cent(const PartialPair& pair);

// ---------------------------------------------------------------------------
// [SECTION] Reference roots and deviations (for the ensemble view)
// ---------------------------------------------------------------------------
//
// Each player i sounds f_i against a just target t_i cents above the root R;
// the deviation is dev_i(R) = 1200 log2(f_i / R) - t_i. The director chooses R:
//   fixed_root     the drone's frequency, given;
//   sounding_bass  the lowest voice that sounds, as it sounds: R = f_b / ratio_b,
//                  so that voice reads 0 and the rest are heard against it;
//   best_fit       the R that needs the least total movement: it minimises
//                  S(R) = sum_i w_i dev_i(R)^2. With x = 1200 log2(R / R0) and
//                  m_i = 1200 log2(f_i / R0), dev_i = m_i - t_i - x, so
//                  dS/dx = -2 sum_i w_i (m_i - t_i - x) = 0 gives the closed form
//                  x* = sum_i w_i (m_i - t_i) / sum_i w_i (a weighted mean), i.e.
//                  R* is the weighted geometric mean of f_i / ratio_i, and the
//                  weighted deviations then sum to zero.
// A voice sounds when its frequency is finite and > 0 and its weight > 0.

enum class ChordReference { fixed_root, sounding_bass, best_fit };

// The reference root in Hz, or NaN when no voice the reference needs sounds.
// freq_hz has one entry per voice; weight is empty (all 1) or one per voice.
// Thread: any. Allocates: no. Locks: no.
double reference_root_hz(const Chord& chord, ChordReference ref, double fixed_root_hz, std::span<const double> freq_hz,
                         std::span<const double> weight = {}) noexcept;

// dev_cents[i] = 1200 log2(freq_hz[i] / root_hz) - voice_cents(i): + is sharp;
// NaN for a silent voice or a NaN root. All spans have one entry per voice.
// Thread: any. Allocates: no. Locks: no.
void voice_deviations(const Chord& chord, double root_hz, std::span<const double> freq_hz,
                      std::span<double> dev_cents) noexcept;

}  // namespace beatless::pitch
