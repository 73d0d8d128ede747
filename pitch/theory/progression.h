// Progression — Roman-numeral progressions as just chords (pitch/theory/chord.h), and comma drift.
// Method: 5-limit just chords on the degrees of the just major and minor scales (the tables below), tuned by the
// fixed-root or the common-tones rule; the second drifts: I vi ii V I ends a syntonic comma (81/80) flat.
// Thread: any; pure functions. Allocates: the values it returns.
// Index: 1 Keys and tables · 2 Parsing · 3 Tuning and drift.
#pragma once

#include "pitch/theory/chord.h"
#include "pitch/theory/ratio.h"
#include "pitch/theory/spelling.h"

#include <optional>
#include <string>
#include <string_view>
#include <vector>

namespace beatless::pitch {

// ---------------------------------------------------------------------------
// [SECTION] Keys and tables
// ---------------------------------------------------------------------------
//
// Degree roots come from the just major scale 1/1 9/8 5/4 4/3 3/2 5/3 15/8
// and the just minor scale 1/1 9/8 6/5 4/3 3/2 8/5 9/5 (leading tone 15/8),
// with one deliberate exception: ii (and ii° in minor) stands on 10/9, the
// "grave" second a comma below 9/8, so that its third and fifth are the
// tonic scale's own F and A (in C). Every chord is just within itself.
// 9/8:10:12:15 gives the other choice (D of V, but F and A a comma sharp).
//
//   major  triad                     seventh (7)
//   I      1/1   4:5:6     C E G     8:10:12:15     C E G B
//   ii     10/9  10:12:15  D- F A    10:12:15:18    D- F A C
//   iii    5/4   10:12:15  E G B     10:12:15:18    E G B D
//   IV     4/3   4:5:6     F A C     8:10:12:15     F A C E
//   V      3/2   4:5:6     G B D     36:45:54:64    G B D F   (F = 16/9 above G)
//   vi     5/3   10:12:15  A C E     10:12:15:18    A C E G
//   vii°   15/8  45:54:64  B D F     viiø7 45:54:64:80  B D F A
//
//   minor
//   i      1/1   10:12:15  C Eb G    10:12:15:18    C Eb G Bb
//   ii°    10/9  25:30:36  D- F Ab   iiø7 25:30:36:45   D- F Ab C
//   III    6/5   4:5:6     Eb G Bb   8:10:12:15     Eb G Bb D
//   iv     4/3   10:12:15  F Ab C    10:12:15:18    F Ab C Eb
//   v      3/2   10:12:15  G Bb D    10:12:15:18    G Bb D F+  (F+ = 27/20)
//   V      3/2   4:5:6     G B D     36:45:54:64    G B D F
//   VI     8/5   4:5:6     Ab C Eb   8:10:12:15     Ab C Eb G
//   VII    9/5   4:5:6     Bb D F+   36:45:54:64    Bb D F+ Ab
//   vii°   15/8  45:54:64  B D F     vii°7 225:270:320:384  B D F Ab
//
// Written forms: upper case for major chords, lower for minor and
// diminished; ° or o marks a diminished triad, ø or /o a half-diminished
// seventh; a trailing 7 asks for the seventh chord of the degree.

enum class KeyMode { major, minor };

struct Key {
    Tonic tonic;                  // spelled tonic ("Eb")
    double tonic_hz = 0.0;        // the tonic's frequency (octave 4 unless given)
    std::optional<KeyMode> mode;  // empty: taken from the numerals
};

// "C", "C4", "Eb3", "A minor", "Am", "F# major", "Bbm"; with no octave the
// tonic is in octave 4. Throws Error naming the text.
Key parse_key(std::string_view text, double a4_hz);

const char* mode_name(KeyMode mode);  // "major", "minor"

// ---------------------------------------------------------------------------
// [SECTION] Parsing
// ---------------------------------------------------------------------------

constexpr std::size_t kMaxProgressionChords = 256;

struct ProgressionChord {
    std::string symbol;  // as written: "V7", "5/3:10:12:15"
    Ratio root;          // chord root above the tonic, fixed-root rule
    Chord chord;         // voices above the chord root, lowest first
};

struct Progression {
    KeyMode mode = KeyMode::major;
    std::vector<ProgressionChord> chords;
};

// Chords separated by spaces, commas, '-', '|' or dashes: "I vi ii V7 I",
// "I-IV-V", "1/1:4:5:6 16/9:4:5:6"; an explicit chord is ROOT:TERMS, e.g. 5/3:10:12:15 (A minor above C).
// A progression is a list of chords, each an exact chord root above the key's tonic and a just chord on that
// root. With no mode given it is major unless a
// numeral only exists in minor (then minor); numerals of both keys mixed
// throw Error. Throws Error naming the token for anything unknown.
Progression parse_progression(std::string_view text, std::optional<KeyMode> mode = {});

// ---------------------------------------------------------------------------
// [SECTION] Tuning and drift
// ---------------------------------------------------------------------------
//
// Tones of adjacent chords are "common" when their fixed-root places name
// the same pitch class (nearest 12-TET step above the tonic, mod 12), so
// D = 10/9 in ii and D = 9/8 in V are one common tone. Common-tones rule:
// chord k is placed at shift s_k (cents) from its fixed-root place, s_0 = 0.
// Each common tone proposes the shift that keeps its pitch (octaves taken
// out, within ±600 cents of s_{k-1}); the chord takes the shift most common
// tones agree on, ties going to the one nearest s_{k-1}, then to the one
// held by the lower voice. With no common tone it keeps s_{k-1}: it moves
// by its own just root step from the chord before. The drift is the last
// chord's shift; the changes that cause it are those with s_k != s_{k-1}.

// fixed_root: every chord root sits at its ratio from the fixed tonic. common_tones: each chord is moved as a
// whole so that a tone it shares with the chord before keeps its exact pitch; this one drifts.
enum class DriftRule { fixed_root, common_tones };
const char* rule_name(DriftRule rule);  // "fixed-root", "common-tones"

struct TunedVoice {
    double cents = 0.0;          // above the tonic
    std::optional<Ratio> ratio;  // the same, exact, when it fits 64 bits
    int step = 0;                // the written note: nearest 12-TET step above the tonic of the fixed-root place
    int pitch_class = 0;         // step mod 12
    double et_offset_cents = 0;  // cents - 100 * step: from that note in 12-TET on the tonic (may pass ±50 after drift)
};

struct CommonTone {
    std::size_t prev_voice = 0;  // in the chord before
    std::size_t voice = 0;       // in this chord
    int pitch_class = 0;
    double motion_cents = 0.0;  // this chord's pitch minus the one before, octaves taken out
    bool held = false;          // |motion| below 1e-6 cents
};

struct TunedChord {
    double shift_cents = 0.0;    // from the fixed-root place
    std::optional<Ratio> shift;  // exact, when it fits 64 bits
    double step_cents = 0.0;     // shift minus the chord before's shift (0 for the first)
    std::vector<TunedVoice> voices;
    std::vector<CommonTone> common;  // with the chord before (empty for the first)
};

struct ProgressionTuning {
    DriftRule rule = DriftRule::fixed_root;
    std::vector<TunedChord> chords;
    double drift_cents = 0.0;         // the last chord's shift: - is flat
    std::optional<Ratio> drift;       // exact, when it fits 64 bits
    std::vector<std::size_t> causes;  // chords k >= 1 whose change from k-1 moves the shift
};

ProgressionTuning tune_progression(const Progression& p, DriftRule rule);

}  // namespace beatless::pitch
