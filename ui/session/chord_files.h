// Chord files — just chords as TOML in targets/, and chords named on the
// command line.
//
// A chord file has kind = "chord" and these keys (ours):
//   title  = "Harmonic seventh chord"   required: what the chord is called
//   about  = "..."                      optional: one sentence for the screen
//   chord  = "4:5:6:7"                  required: terms, or ratios "1/1 5/4 3/2"
//   voices = ["bass", "tenor", ...]     optional: one part name per voice, low to high
// Errors name the file, line and key: "my.toml:5: `chord`: '4:0:6': chord terms must be positive".
#pragma once

#include "pitch/theory/chord.h"

#include <string>
#include <string_view>
#include <vector>

namespace beatless::ui {

struct ChordFile {
    std::string id;     // file stem; empty for a chord typed as text
    std::string title;  // empty for a chord typed as text
    std::string about;
    std::string text;  // the chord as written ("4:5:6:7")
    pitch::Chord chord;
    std::vector<std::string> voice_names;  // empty, or one per voice
};

ChordFile parse_chord_file(std::string_view text, std::string_view source_name);

// A built-in name ("harmonic-seventh") or a path to a .toml file.
ChordFile load_chord_file(std::string_view name_or_path);

// What a user may give as CHORD: a chord text ("4:5:6", "1/1 5/4 3/2"), a
// built-in chord name or a path. Throws Error naming the text or file.
ChordFile chord_from_argument(std::string_view arg);

}  // namespace beatless::ui
