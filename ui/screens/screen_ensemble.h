// The Ensemble screen's view — what its last frame showed, as plain data:
// per card the one verdict and the words, colour and ratio it was drawn
// with; the chord table's rows; and the box of every piece of text drawn
// (its panel's box beside it). Tests read it to check that a card agrees
// with its table row and that no text overlaps another or leaves its panel.
// Thread: the control thread (the frame loop); valid after the screen's
// build() and until the next one.
#pragma once

#include "ui/screens/screen.h"

#include <cmath>
#include <cstdint>
#include <string>
#include <vector>

namespace beatless::ui {

struct ViewBox {
    float x0 = 0, y0 = 0, x1 = 0, y1 = 0;  // pixels, x1/y1 exclusive
};

enum class CardState { no_input, resting, silent, copy, other_note, sounding };

struct EnsembleCardView {
    std::string name;   // as drawn (may end in an ellipsis)
    std::string ratio;  // the chord voice's ratio, written as the table writes it
    int octaves = 0;    // the octave the player sings it in (0 = the table's)
    CardState state = CardState::no_input;
    double dev_cents = NAN;    // the verdict: vibrato centre under the reference; NaN unless sounding
    std::string number;        // the verdict as drawn ("+5")
    std::string word;          // "in tune", "sharp", "flat", "resting", "silent" ...
    std::uint32_t colour = 0;  // the number's and the word's colour
    std::string last;          // "last: +5 c" after the player stops; empty otherwise
    ViewBox box;
};

struct EnsembleRowView {
    std::string ratio;  // "3/2"
    std::string note;   // spelled as `beatless chord` spells it
    std::string who;    // "A, T +1 oct"
};

struct EnsembleTextView {
    std::string text;
    ViewBox box;    // the text's own box
    ViewBox panel;  // the panel it belongs in
};

struct EnsembleView {
    std::vector<EnsembleCardView> cards;  // in player order
    std::vector<EnsembleRowView> rows;    // the table's rows shown, top voice first
    int rows_hidden = 0;                  // voices summed up as "+N more"
    bool legend = false;                  // the beat icons' legend was drawn
    std::vector<EnsembleTextView> texts;
};

// The view of an Ensemble screen (make_ensemble_screen()); nullptr for another screen.
const EnsembleView* ensemble_view(const Screen& screen);

}  // namespace beatless::ui
