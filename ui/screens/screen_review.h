// The Review screen's view — what its last frame drew, as plain data: the plot's axes (time and cents to pixels),
// where each held note's mark sits, the selected note and the takes listed. Tests read it to check that the trace
// and the marks sit where the numbers say. Thread: the control thread (the frame loop); valid after the screen's
// build() and until the next one.
#pragma once

#include "ui/screens/screen.h"

#include <string>
#include <vector>

namespace beatless::ui {

struct ReviewMarkView {
    int note = 0;              // index into the take's notes
    float x0 = 0, x1 = 0;      // pixels: the note's start and end
    float y = 0;               // pixels: its measured centre
    double cents = 0.0;        // the centre, cents above the root (two voices: the upper voice above the reference)
    float y_low = 0;           // two voices: pixels of the lower voice
    double low_cents = 0.0;    // two voices: the lower voice, cents above the reference
    double dev_cents = 0.0;    // against the judged target (NaN between targets or unsure)
    bool unsure = false;       // no deviation: its dropouts may have moved it (pitch::judge_dropouts)
    std::uint32_t colour = 0;  // the mark's colour
};

struct ReviewLineView {  // a target line of the one-voice plot
    float y = 0;         // pixels
    double cents = 0.0;  // cents above the root
    std::string label;   // as drawn at its left ("5/4 +1oct", as analyze names a note matched there), or "" when
                         // a nearer line's label took the room
    float label_x0 = 0, label_y0 = 0, label_x1 = 0, label_y1 = 0;  // the label's box, pixels
};

struct ReviewView {
    bool open = false;               // a take is open and analysed
    bool reading = false;            // a take is being opened (read and analysed on the worker)
    std::string title;               // its file name
    float plot_x0 = 0, plot_x1 = 0;  // pixels of the plot's inner box
    float plot_y0 = 0, plot_y1 = 0;
    double t0_s = 0.0, t1_s = 0.0;          // time at plot_x0 and plot_x1
    double cents_lo = 0.0, cents_hi = 0.0;  // cents at plot_y1 and plot_y0
    std::vector<ReviewMarkView> marks;      // the notes in view
    std::vector<ReviewLineView> lines;      // one voice: the target lines in view, each in its octave
    std::vector<ReviewMarkView> hidden;     // voices hidden on a drone partial, in view (outlined; note =
                                            //   index into the analysis's on_partials, dev_cents NaN)
    std::vector<std::string> hidden_words;  // their lines as analyze prints them (all, in view or not)
    int selected = -1;                      // the selected note, -1 for none
    std::vector<std::string> takes;         // the list's rows as drawn
    std::string heading;                    // the selected item's heading ("Note 2 of 3   2.25 - 3.85 s"), or ""
    std::string against;                    // what it is judged against ("against 14/5, ..."), or ""
    std::string remark;                     // the note's remark line ("meant 3/2 +1oct, sung ..."), or ""
    std::vector<std::string> summary_rows;  // the Per target panel's target names as drawn (all rows, shown or not)
    float x_of(double t_s) const {
        return plot_x0 + static_cast<float>((t_s - t0_s) / (t1_s - t0_s)) * (plot_x1 - plot_x0);
    }
    float y_of(double cents) const {
        return plot_y1 - static_cast<float>((cents - cents_lo) / (cents_hi - cents_lo)) * (plot_y1 - plot_y0);
    }
};

std::unique_ptr<Screen> make_review_screen();
// The view of a Review screen; nullptr for another screen.
const ReviewView* review_view(const Screen& screen);
// Selects a note and zooms the view to `span_s` seconds around it (tests, snapshots); -1 selects none.
void review_select(Screen& screen, int note, double span_s);
// Writes the open take's report PNG, CSV and JSON beside it, as the screen's Export button does (tests).
void review_export(Screen& screen, AppState& app);

}  // namespace beatless::ui
