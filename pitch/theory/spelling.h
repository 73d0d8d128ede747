// Spelling — note names spelled against a tonic, the letter by chromatic scale degree (1 b2 2 b3 3 4 #4 5 b6 6 b7 7).
// Method: the usual chromatic spelling in major and minor keys (common practice); octaves in scientific pitch
// notation (ASA 1939); the tritone family split by size (common practice, beside spell_above_root).
// Thread: any; pure functions. Allocates: the strings it returns.
#pragma once

#include <string>
#include <string_view>
#include <vector>

namespace beatless::pitch {

struct Tonic {
    int letter = 0;            // 0..6 for C D E F G A B
    int alter = 0;             // sharps (+) or flats (-) on the letter
    int pc = 0;                // pitch class 0..11, C = 0
    std::string name() const;  // "Eb", "F#", "C"
};

// "C", "Eb", "F#3", "B♭2": letter, accidentals, optional octave (ignored
// here). Throws Error naming the text when it is not a note.
Tonic parse_tonic(std::string_view note);

// The pitch `semitones` above the tonic (any integer), spelled: "Bb". The letter is the tonic's letter moved by
// the degree, and sharps or flats make up the rest, so the third of Eb is G, the flat seventh of C is Bb and the
// augmented fourth of F is B.
std::string spell_pitch_class(const Tonic& tonic, int semitones);

// MIDI note `midi` spelled against the tonic, with its octave: "Bb3". Scientific pitch notation (ASA 1939)
// numbers octaves by letter: Cb4 sounds a semitone below C4, B#3 as C4.
std::string spell_midi(const Tonic& tonic, int midi);

// The notes of a chord (MIDI numbers) spelled from its root, with octaves.
// As above, except that the tritone above the root is a diminished fifth
// (E-G-Bb, B-D-F) when the chord holds a minor third, and eight semitones
// are an augmented fifth (C-E-G#) when it holds a major third but no fifth.
std::vector<std::string> spell_chord(const Tonic& root, const std::vector<int>& midi);

// A pitch `cents_above_root` above (negative: below) a root, named as the
// performer would read it against that root.
struct NoteAboveRoot {
    std::string name;         // "Bb3": letter, accidentals, octave
    std::string pitch_class;  // "Bb"
    int midi = 0;             // the equal-tempered step named (MIDI number)
    double offset_cents = 0;  // cents_above_root minus that step's cents above the root
};

// The one speller for "which note is this, over this root": the root as the
// user typed it ("Bb3", "D3"; a frequency such as "146.8" is spelled from
// its nearest note at a4_hz, sharps for black keys). The step is the
// nearest whole semitone. The tritone family is split by size (common practice): narrower than 600 cents it is
// an augmented fourth (45/32, 7/5 over D: G#), wider a diminished fifth (64/45, 10/7 over D: Ab).
// Throws Error naming the root when it is neither a note nor a frequency.
NoteAboveRoot spell_above_root(std::string_view root, double cents_above_root, double a4_hz = 440.0);

// A frequency named against the typed root, as above; here offset_cents is
// from the equal-tempered note at a4_hz (what a tuner shows), so the root
// itself, typed as a note, is its own name at 0 cents: ("Bb3", 233.08 Hz) -> Bb3.
NoteAboveRoot spell_hz_above_root(std::string_view root, double freq_hz, double a4_hz = 440.0);

}  // namespace beatless::pitch
