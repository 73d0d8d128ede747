// Take report — one printable page (PNG) of an analyzed take: trace, target lines, notes and the summary table.
// Method: ours: Dear ImGui's draw list offscreen (ui/render/imgui_host.h) through the CPU rasterizer
// (ui/render/raster.h), written by ui/render/png.h; the page's contents beside render_report.
// Thread: the caller's (the analyze command's). Allocates: yes.
#pragma once

#include "pitch/measure/decimated_trace.h"
#include "ui/render/raster.h"
#include "ui/session/take_analysis.h"
#include "ui/session/take_words.h"

#include <cstdint>
#include <string>
#include <vector>

namespace beatless::ui {

struct ReportTarget {
    double cents = 0.0;  // the target within its own octave (as in the set)
    std::string ratio;   // "7/5" or "600c"
    std::string name;    // "septimal tritone", or empty
    bool used = false;   // some note matched it (drawn darker, always labelled)
    int index = -1;      // in ReportData::set, which names it in another octave; -1: `ratio` with "+1oct" said
};

struct ReportMark {  // one note or dyad
    double start_s = 0.0;
    double end_s = 0.0;
    double cents = 0.0;                         // measured centre (same axis as the trace)
    double target_cents = 0.0;                  // the matched target after its octave shift
    double dev_cents = 0.0;                     // + is sharp (wide)
    std::string none_word = "between targets";  // said in place of the deviation when there is none
};

struct ReportRow {  // one line of the per-target summary
    std::string ratio;
    std::string name;
    int count = 0;
    double mean_dev_cents = 0.0;
    double spread_cents = 0.0;
    std::string words;  // "averages 6.0 cents flat"
};

struct ReportData {
    std::string title;                             // the file name
    std::string subtitle;                          // root, target set, date of analysis
    std::string axis_label;                        // "cents above the root"
    std::string mark_word = "note";                // "note" or "interval", for the table's header
    double dur_s = 0.0;                            // length of the take
    const pitch::DecimatedTrace* trace = nullptr;  // may be null (no trace drawn)
    std::vector<ReportTarget> targets;
    bool octave_equivalent = true;  // draw each target in every octave in view
    pitch::TargetSet set;           // the targets' set: a line in another octave is named from it as analyze names
    bool intervals = false;         // a note's (false: "5/4 +1oct") or an interval's (true: "5/2")
    std::vector<ReportMark> marks;
    std::vector<ReportRow> summary;
};

// White page, dark ink, type about 4 mm high on A4 (2000 x 1200 px). Layout and colours are ours.
constexpr int kReportWidthPx = 2000;
constexpr int kReportHeightPx = 1200;

// Bar colours by |deviation|: within 5 cents, within 15, beyond.
constexpr std::uint32_t kReportGood = rgba(0, 130, 70);
constexpr std::uint32_t kReportFair = rgba(205, 120, 0);
constexpr std::uint32_t kReportPoor = rgba(200, 30, 40);
constexpr std::uint32_t kReportPaper = rgba(255, 255, 255);

// Where things go on the page (exposed so tests can find them).
struct ReportLayout {
    float plot_x0 = 0, plot_y0 = 0, plot_x1 = 0, plot_y1 = 0;  // pixels
    double t0_s = 0, t1_s = 1;                                 // time across the plot
    double c_lo = 0, c_hi = 1;                                 // cents from the bottom to the top
    float x_of(double t_s) const {
        return plot_x0 + static_cast<float>((t_s - t0_s) / (t1_s - t0_s)) * (plot_x1 - plot_x0);
    }
    float y_of(double cents) const {
        return plot_y1 - static_cast<float>((cents - c_lo) / (c_hi - c_lo)) * (plot_y1 - plot_y0);
    }
};
ReportLayout report_layout(const ReportData& data);

// A target line in the plot and its label beside it: the target in the octave of the line, named as analyze names a
// note matched there ("5/4 +1oct"; "5/2" between two voices).
struct ReportLineLabel {
    float line_y = 0.0f;  // the line's pixel row
    float y = 0.0f;       // the label's centre row, pushed apart from its neighbours
    std::string ratio;    // "5/4 +1oct"
    std::string name;     // "just major third", or empty
    bool used = false;    // its target was matched by some note (drawn darker)
};
// The lines and the labels drawn (those of targets no note used give way when all cannot fit), top to bottom.
std::vector<ReportLineLabel> report_line_labels(const ReportData& data, const ReportLayout& layout);

// Draws the page into `out` (resized to kReportWidthPx x kReportHeightPx): a title with the file, root and date;
// the pitch trace over time in cents above the root (or, for two voices, the interval above the low voice); the
// target lines in every octave the trace reaches, labelled by ratio and name; each note's bar at its centre,
// coloured by its deviation and labelled with it; and the per-target summary table.
void render_report(const ReportData& data, PixelBuffer& out);

// Draws the page and writes it as PNG. Throws Error naming the file.
void write_report(const std::string& path, const ReportData& data);

// The report's targets, marks and summary rows from notes or dyads (to_mark makes an item's ReportMark); title,
// subtitle, axis and trace are the caller's.
template <class Item, class ToMark>
ReportData report_of(const pitch::TargetSet& set, const std::vector<Item>& items,
                     const std::vector<pitch::TargetSummary>& summary, bool dyads, ToMark to_mark) {
    ReportData d;
    d.set = set;
    d.intervals = dyads;
    std::vector<bool> used(set.targets.size(), false);
    for (const Item& it : items) {
        if (it.target_index >= 0) used[static_cast<std::size_t>(it.target_index)] = true;
        d.marks.push_back(to_mark(it));
    }
    for (std::size_t i = 0; i < set.targets.size(); ++i)
        d.targets.push_back({set.targets[i].interval.cents(), set.targets[i].interval.str(),
                             target_name_of(set, static_cast<int>(i)), used[i], static_cast<int>(i)});
    for (const auto& r : summary) {
        // Named as analyze's summary names it, in the octave its notes were matched at ("3/2 +1oct", "5/2").
        const std::string ratio = target_words_at(set, r.target_index, r.target_octaves, dyads);
        const std::string w = summary_words(r, ratio, dyads);
        // The ratio and the count have their own columns: keep "averages 6 cents flat".
        const std::size_t from = std::min(w.size(), ratio.size() + 1);
        d.summary.push_back({ratio, target_name_words_at(set, r.target_index, r.target_octaves, dyads), r.count,
                             r.mean_dev_cents, r.spread_cents, w.substr(from, w.find(" (") - from)});
    }
    return d;
}

// One voice's report data: the notes, summary, trace (kept for as long as `a` lives), axis and length.
ReportData one_voice_report_data(const pitch::TargetSet& set, const OneVoiceAnalysis& a);
// Two voices' report data: the intervals (cents of the upper voice above the lower), summary, trace, axis and length.
ReportData two_voice_report_data(const pitch::TargetSet& set, const TwoVoiceAnalysis& a);

}  // namespace beatless::ui
