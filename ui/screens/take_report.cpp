// Analysis report — see analysis_report.h.
//
// Index:
//   1. Page geometry and the cents range in view
//   2. Ticks and labels
//   3. The plot: grid, target lines and their labels, trace, note bars
//   4. Title, legend and the summary table
//   5. Rendering and the PNG
#include "ui/screens/take_report.h"

#include "pitch/base/text.h"
#include "ui/render/imgui_host.h"
#include "ui/render/png.h"
#include "ui/session/safe_file.h"

#include <imgui.h>

#include <algorithm>
#include <cfloat>
#include <cmath>
#include <cstdio>
#include <utility>

namespace beatless::ui {

namespace {

constexpr float kBodyPx = 26.0f;  // ~3.9 mm on a 297 mm wide A4 page: about 11 pt
constexpr float kTitlePx = 44.0f;
constexpr float kMargin = 40.0f;

constexpr ImU32 kInk = rgba(25, 25, 35);
constexpr ImU32 kSoftInk = rgba(95, 95, 110);
constexpr ImU32 kGrid = rgba(228, 228, 234);
constexpr ImU32 kTargetUsed = rgba(60, 60, 80);
constexpr ImU32 kTargetOther = rgba(170, 170, 182);
constexpr ImU32 kTrace = rgba(35, 70, 140);
constexpr ImU32 kTraceDense = rgba(150, 170, 210);  // a band of many frames per pixel: lighter, so the bars stand out
constexpr double kJoinCents = 60.0;                 // larger jumps between neighbouring points are not joined by a line

// ---------------------------------------------------------------------------
// [SECTION] Page geometry and the cents range in view
// ---------------------------------------------------------------------------
double percentile_of(std::vector<double>& v, double p) {
    if (v.empty()) return NAN;
    const auto k = static_cast<std::size_t>(std::clamp(p, 0.0, 1.0) * static_cast<double>(v.size() - 1));
    std::nth_element(v.begin(), v.begin() + static_cast<std::ptrdiff_t>(k), v.end());
    return v[k];
}

}  // namespace

ReportLayout report_layout(const ReportData& d) {
    ReportLayout l;
    l.plot_x0 = 150.0f;
    l.plot_y0 = 160.0f;
    l.plot_y1 = 840.0f;
    l.t0_s = 0.0;
    l.t1_s = d.dur_s > 0.0 ? d.dur_s : 1.0;

    double lo = INFINITY, hi = -INFINITY;
    for (const ReportMark& m : d.marks) {
        lo = std::min({lo, m.cents, m.target_cents});
        hi = std::max({hi, m.cents, m.target_cents});
    }
    if (d.trace) {
        std::vector<double> mins, maxs;
        for (std::size_t i = 0; i < d.trace->size(); ++i) {
            const pitch::TracePoint& p = (*d.trace)[i];
            if (p.frames == 0) continue;
            mins.push_back(p.min_cents);
            maxs.push_back(p.max_cents);
        }
        if (!mins.empty()) {
            // With notes, the trace widens the view only to its bulk (vibrato
            // peaks), not to stray octave errors; without notes it sets the view.
            const double tl = percentile_of(mins, d.marks.empty() ? 0.05 : 0.01);
            const double th = percentile_of(maxs, d.marks.empty() ? 0.95 : 0.99);
            if (d.marks.empty() || (tl > lo - 150.0)) lo = std::min(lo, tl);
            if (d.marks.empty() || (th < hi + 150.0)) hi = std::max(hi, th);
        }
    }
    if (!std::isfinite(lo) || !std::isfinite(hi)) {
        lo = 0.0;
        hi = 1200.0;
    }
    const double pad = std::max(20.0, 0.08 * (hi - lo));
    lo -= pad;
    hi += pad;
    if (hi - lo < 150.0) {
        const double mid = 0.5 * (lo + hi);
        lo = mid - 75.0;
        hi = mid + 75.0;
    }
    l.c_lo = lo;
    l.c_hi = hi;
    // Room on the right for the longest target label (ratio column, then the name), estimated at 0.6 em a character
    // so names are not cut; the plot keeps at least 1200 px and gives no more than it needs.
    l.plot_x1 = 1480.0f;
    std::size_t ratio_chars = 0, name_chars = 0;
    auto chars = [](const std::string& s) {
        std::size_t n = 0;
        for (const unsigned char c : s) n += (c & 0xC0) != 0x80 ? 1 : 0;
        return n;
    };
    for (const ReportLineLabel& a : report_line_labels(d, l)) {
        ratio_chars = std::max(ratio_chars, chars(a.ratio));
        name_chars = std::max(name_chars, chars(a.name));
    }
    const float ratio_w = std::max(127.0f, 0.6f * kBodyPx * static_cast<float>(ratio_chars) + 24.0f);
    const float label_w = 36.0f + ratio_w + 0.6f * kBodyPx * static_cast<float>(name_chars);
    l.plot_x1 = std::clamp(kReportWidthPx - kMargin / 2 - label_w, 1200.0f, 1480.0f);
    return l;
}

namespace {

// The cents of target `t`'s lines in view: one in each octave the plot spans (only its own without octave
// equivalence).
std::vector<double> octaves_in_view(const ReportData& d, const ReportLayout& l, const ReportTarget& t) {
    std::vector<double> out;
    const int k0 = d.octave_equivalent ? static_cast<int>(std::floor((l.c_lo - t.cents) / 1200.0)) : 0;
    const int k1 = d.octave_equivalent ? static_cast<int>(std::ceil((l.c_hi - t.cents) / 1200.0)) : 0;
    for (int k = k0; k <= k1; ++k)
        if (const double c = t.cents + 1200.0 * k; c >= l.c_lo && c <= l.c_hi) out.push_back(c);
    return out;
}

}  // namespace

std::vector<ReportLineLabel> report_line_labels(const ReportData& d, const ReportLayout& l) {
    std::vector<ReportLineLabel> labels;
    for (const ReportTarget& t : d.targets)
        for (const double c : octaves_in_view(d, l, t)) {
            // Named in the line's octave as analyze names a note matched there.
            const int k = static_cast<int>(std::lround((c - t.cents) / 1200.0));
            ReportLineLabel a;
            a.line_y = a.y = l.y_of(c);
            a.used = t.used;
            const bool in_set = t.index >= 0 && static_cast<std::size_t>(t.index) < d.set.targets.size();
            a.ratio = in_set ? target_words_at(d.set, t.index, k, d.intervals)
                             : t.ratio + (k == 0 ? "" : (k > 0 ? " +" : " ") + std::to_string(k) + "oct");
            a.name = in_set ? target_name_words_at(d.set, t.index, k, d.intervals) : t.name;
            labels.push_back(std::move(a));
        }
    // Labels beside the plot, pushed apart so none overlaps; when they cannot all fit, the targets no note used give
    // way.
    const float gap = kBodyPx + 4.0f;
    const float top = l.plot_y0 + 0.5f * gap, bottom = l.plot_y1 - 0.5f * gap;
    if (static_cast<float>(labels.size()) * gap > bottom - top + gap)
        std::erase_if(labels, [](const ReportLineLabel& a) { return !a.used; });
    std::stable_sort(labels.begin(), labels.end(),
                     [](const ReportLineLabel& a, const ReportLineLabel& b) { return a.line_y < b.line_y; });
    for (std::size_t i = 0; i < labels.size(); ++i)
        labels[i].y = std::max(labels[i].line_y, i ? labels[i - 1].y + gap : top);
    for (std::size_t i = labels.size(); i-- > 0;)
        labels[i].y = std::min(labels[i].y, i + 1 < labels.size() ? labels[i + 1].y - gap : bottom);
    return labels;
}

namespace {

// ---------------------------------------------------------------------------
// [SECTION] Ticks and labels
// ---------------------------------------------------------------------------
double tick_step(double span, std::initializer_list<double> steps, int max_ticks) {
    double last = 1.0;
    for (double s : steps) {
        last = s;
        if (span / s <= max_ticks) return s;
    }
    while (span / last > max_ticks) last *= 2.0;
    return last;
}

// "+4.5", "−6.0", "0.0": fixed decimals, a true minus sign, no signed zero.
std::string signed_cents(double c, int decimals) {
    char buf[32];
    std::snprintf(buf, sizeof buf, "%.*f", decimals, std::fabs(c));
    const bool zero = std::fabs(c) < 0.5 * std::pow(10.0, -decimals);
    return zero ? std::string(buf) : (c < 0 ? "\u2212" : "+") + std::string(buf);
}

// Cuts `s` (UTF-8) to fit `width_px`, ending it with an ellipsis when cut.
std::string fit_text(ImFont* f, std::string s, float width_px) {
    auto w = [&](const std::string& t) { return f->CalcTextSizeA(f->FontSize, FLT_MAX, 0.0f, t.c_str()).x; };
    if (w(s) <= width_px) return s;
    while (!s.empty() && w(s + "\u2026") > width_px) {
        s.pop_back();
        while (!s.empty() && (static_cast<unsigned char>(s.back()) & 0xC0) == 0x80) s.pop_back();
    }
    while (!s.empty() && s.back() == ' ') s.pop_back();
    return s + "\u2026";
}

std::string clock_text(double t_s, bool minutes) {
    if (!minutes) return pitch::format_trimmed(t_s, 1);
    const long s = std::lround(t_s);
    char buf[32];
    if (s >= 3600)
        std::snprintf(buf, sizeof buf, "%ld:%02ld:%02ld", s / 3600, (s / 60) % 60, s % 60);
    else
        std::snprintf(buf, sizeof buf, "%ld:%02ld", s / 60, s % 60);
    return buf;
}

struct Ink {
    ImDrawList* dl;
    ImFont* body;
    ImFont* bold;
    ImFont* title;
    ImVec2 size(ImFont* f, const std::string& s) const {
        return f->CalcTextSizeA(f->FontSize, FLT_MAX, 0.0f, s.c_str());
    }
    void text(ImFont* f, float x, float y, ImU32 col, const std::string& s) const {
        dl->AddText(f, f->FontSize, ImVec2(std::floor(x), std::floor(y)), col, s.c_str());
    }
    void text_right(ImFont* f, float x, float y, ImU32 col, const std::string& s) const {
        text(f, x - size(f, s).x, y, col, s);
    }
    void text_centre(ImFont* f, float x, float y, ImU32 col, const std::string& s) const {
        text(f, x - 0.5f * size(f, s).x, y, col, s);
    }
};

// A mark's colour by its deviation (the legend's bands); one without a deviation (between targets, unsure) is in the
// soft ink: no band is true of it.
ImU32 mark_colour(double dev_cents) {
    if (!std::isfinite(dev_cents)) return kSoftInk;
    const double a = std::fabs(dev_cents);
    return a <= 5.0 ? kReportGood : a <= 15.0 ? kReportFair : kReportPoor;
}

// ---------------------------------------------------------------------------
// [SECTION] The plot: grid, target lines and their labels, trace, note bars
// ---------------------------------------------------------------------------
void draw_axes(const Ink& ink, const ReportData& d, const ReportLayout& l) {
    ImDrawList* dl = ink.dl;
    const float lh = ink.body->FontSize;
    // Cents grid and labels.
    const double cstep = tick_step(l.c_hi - l.c_lo, {5, 10, 20, 25, 50, 100, 200, 250, 500, 1000, 1200}, 10);
    for (double c = std::ceil(l.c_lo / cstep) * cstep; c <= l.c_hi; c += cstep) {
        const float y = std::floor(l.y_of(c)) + 0.5f;
        dl->AddLine(ImVec2(l.plot_x0, y), ImVec2(l.plot_x1, y), kGrid, 1.0f);
        ink.text_right(ink.body, l.plot_x0 - 10.0f, y - 0.5f * lh, kSoftInk, signed_cents(c, 0));
    }
    ink.text(ink.body, l.plot_x0 - 110.0f, l.plot_y0 - lh - 12.0f, kInk, d.axis_label);
    // Time grid and labels.
    const double span = l.t1_s - l.t0_s;
    const bool minutes = span >= 120.0;
    const double tstep = tick_step(span, {0.5, 1, 2, 5, 10, 15, 30, 60, 120, 300, 600, 900, 1800, 3600}, 12);
    for (double t = 0.0; t <= l.t1_s + 1e-9; t += tstep) {
        const float x = std::floor(l.x_of(t)) + 0.5f;
        dl->AddLine(ImVec2(x, l.plot_y0), ImVec2(x, l.plot_y1), kGrid, 1.0f);
        ink.text_centre(ink.body, x, l.plot_y1 + 8.0f, kSoftInk, clock_text(t, minutes));
    }
    const std::string time_label = minutes ? "time (min:s)" : "time (s)";
    ink.text_right(ink.body, l.plot_x1, l.plot_y1 + 8.0f + lh + 4.0f, kInk, time_label);
    // The key to the marks, on the same line, left of the time axis's label and never over it.
    const float key_w = l.plot_x1 - l.plot_x0 - ink.size(ink.body, time_label).x - 24.0f;
    ink.text(
        ink.body, l.plot_x0, l.plot_y1 + 8.0f + lh + 4.0f, kSoftInk,
        fit_text(ink.body, "bar: a held " + d.mark_word + "'s centre, labelled with its deviation; stem: target to bar",
                 key_w));
    dl->AddRect(ImVec2(l.plot_x0 - 0.5f, l.plot_y0 - 0.5f), ImVec2(l.plot_x1 + 0.5f, l.plot_y1 + 0.5f), kInk, 0.0f, 0,
                1.5f);
}

void draw_targets(const Ink& ink, const ReportData& d, const ReportLayout& l) {
    ImDrawList* dl = ink.dl;
    const std::vector<ReportLineLabel> labels = report_line_labels(d, l);
    // Every line in view, labelled or not.
    for (const ReportTarget& t : d.targets)
        for (const double c : octaves_in_view(d, l, t))
            dl->AddLine(ImVec2(l.plot_x0, l.y_of(c)), ImVec2(l.plot_x1, l.y_of(c)), t.used ? kTargetUsed : kTargetOther,
                        t.used ? 2.0f : 1.2f);
    const float lx = l.plot_x1 + 36.0f;
    for (const ReportLineLabel& a : labels) {
        const ImU32 col = a.used ? kInk : kSoftInk;
        dl->AddLine(ImVec2(l.plot_x1 + 2.0f, a.line_y), ImVec2(lx - 6.0f, a.y), a.used ? kTargetUsed : kTargetOther,
                    1.2f);
        const float ty = a.y - 0.5f * ink.body->FontSize;
        ImFont* f = a.used ? ink.bold : ink.body;
        ink.text(f, lx, ty, col, a.ratio);
        if (!a.name.empty()) {
            const float nx = lx + std::max(ink.size(f, a.ratio).x + 12.0f, 115.0f);
            ink.text(ink.body, nx, ty, kSoftInk, fit_text(ink.body, a.name, kReportWidthPx - kMargin / 2 - nx));
        }
    }
}

void draw_trace(const Ink& ink, const ReportData& d, const ReportLayout& l) {
    if (!d.trace || d.trace->size() == 0) return;
    ImDrawList* dl = ink.dl;
    const pitch::DecimatedTrace& tr = *d.trace;
    const float bucket_px = l.x_of(tr.bucket_s()) - l.x_of(0.0);
    if (bucket_px < 1.0f) {
        // Dense: one vertical stroke per bucket over its frames' range,
        // stretched to the previous bucket's mean so the trace stays joined.
        double prev = NAN;
        for (std::size_t i = 0; i < tr.size(); ++i) {
            const pitch::TracePoint& p = tr[i];
            if (p.frames == 0) {
                prev = NAN;
                continue;
            }
            const bool join = !std::isnan(prev) && std::fabs(prev - p.mean_cents) <= kJoinCents;
            const double hi = join ? std::max(p.max_cents, prev) : p.max_cents;
            const double lo = join ? std::min(p.min_cents, prev) : p.min_cents;
            const float x = l.x_of(p.t_s);
            const float ya = l.y_of(hi), yb = std::max(l.y_of(lo), ya + 1.5f);
            dl->AddLine(ImVec2(x, ya), ImVec2(x, yb), kTraceDense, 1.5f);
            prev = p.mean_cents;
        }
        return;
    }
    std::vector<ImVec2> run;
    double prev = NAN;
    auto flush = [&] {
        if (run.size() >= 2)
            dl->AddPolyline(run.data(), static_cast<int>(run.size()), kTrace, ImDrawFlags_None, 2.0f);
        else if (run.size() == 1)
            dl->AddCircleFilled(run[0], 1.5f, kTrace);
        run.clear();
    };
    for (std::size_t i = 0; i < tr.size(); ++i) {
        const pitch::TracePoint& p = tr[i];
        if (p.frames == 0) {
            flush();
            continue;
        }
        const ImVec2 v(l.x_of(p.t_s), l.y_of(p.mean_cents));
        if (!run.empty() && std::fabs(p.mean_cents - prev) > kJoinCents) flush();
        run.push_back(v);
        prev = p.mean_cents;
    }
    flush();
}

// Returns how many deviations could not be written for lack of room.
int draw_marks(const Ink& ink, const ReportData& d, const ReportLayout& l) {
    ImDrawList* dl = ink.dl;
    struct Box {
        float x0, y0, x1, y1;
    };
    std::vector<Box> placed;
    int skipped = 0;
    const float th = ink.body->FontSize;
    for (const ReportMark& m : d.marks) {
        const ImU32 col = mark_colour(m.dev_cents);
        const float x0 = l.x_of(m.start_s), x1 = std::max(l.x_of(m.end_s), x0 + 3.0f);
        const float y = l.y_of(m.cents), yt = l.y_of(m.target_cents);
        const float xm = 0.5f * (x0 + x1);
        // The deviation as a stem from the target line to the bar, then the bar.
        dl->AddLine(ImVec2(xm, yt), ImVec2(xm, y), col, 2.0f);
        dl->AddRectFilled(ImVec2(x0 - 1.0f, y - 4.5f), ImVec2(x1 + 1.0f, y + 4.5f),
                          kInk);  // a dark rim: visible over the trace
        dl->AddRectFilled(ImVec2(x0, y - 3.5f), ImVec2(x1, y + 3.5f), col);
        const std::string s = std::isfinite(m.dev_cents) ? signed_cents(m.dev_cents, 1) + " c" : m.none_word;
        const float tw = ink.size(ink.bold, s).x;
        bool done = false;
        for (const float ty : {std::min(y, yt) - 8.0f - th, std::max(y, yt) + 8.0f}) {
            const Box b{xm - 0.5f * tw - 4.0f, ty, xm + 0.5f * tw + 4.0f, ty + th};
            if (b.y0 < l.plot_y0 || b.y1 > l.plot_y1 || b.x0 < l.plot_x0 || b.x1 > l.plot_x1) continue;
            const bool clash = std::any_of(placed.begin(), placed.end(), [&](const Box& o) {
                return b.x0 < o.x1 && o.x0 < b.x1 && b.y0 < o.y1 && o.y0 < b.y1;
            });
            if (clash) continue;
            dl->AddRectFilled(ImVec2(b.x0, b.y0), ImVec2(b.x1, b.y1), rgba(255, 255, 255, 215), 3.0f);
            ink.text(ink.bold, b.x0 + 4.0f, b.y0, col, s);
            placed.push_back(b);
            done = true;
            break;
        }
        if (!done) ++skipped;
    }
    return skipped;
}

// ---------------------------------------------------------------------------
// [SECTION] Title, legend and the summary table
// ---------------------------------------------------------------------------
void draw_title(const Ink& ink, const ReportData& d) {
    ink.text(ink.title, kMargin, 24.0f, kInk, d.title);
    ink.text(ink.body, kMargin, 24.0f + ink.title->FontSize + 10.0f, kSoftInk, d.subtitle);
    // Legend, top right: what the bar colours mean.
    struct Item {
        ImU32 col;
        const char* text;
    };
    const Item items[] = {{kReportGood, "within 5 c"}, {kReportFair, "5 to 15 c"}, {kReportPoor, "over 15 c"}};
    float x = kReportWidthPx - kMargin;
    const float y = 36.0f;
    for (int i = 2; i >= 0; --i) {
        x -= ink.size(ink.body, items[i].text).x;
        ink.text(ink.body, x, y, kInk, items[i].text);
        x -= 34.0f;
        ink.dl->AddRectFilled(ImVec2(x, y + 6.0f), ImVec2(x + 26.0f, y + ink.body->FontSize - 4.0f), items[i].col);
        x -= 24.0f;
    }
}

void draw_summary(const Ink& ink, const ReportData& d, float y0) {
    const float lh = ink.body->FontSize + 6.0f;
    const std::string plural = d.mark_word + "s";
    ink.text(ink.bold, kMargin, y0, kInk, "Per target");
    if (d.summary.empty()) {
        ink.text(ink.body, kMargin + 180.0f, y0, kSoftInk, "no held " + plural + " were found");
        return;
    }
    const float bottom = kReportHeightPx - kMargin;
    const float row0 = y0 + lh + 4.0f;
    const int per_col = std::max(1, static_cast<int>((bottom - row0) / lh));
    const int cols = static_cast<int>(d.summary.size()) > per_col ? 2 : 1;
    const float col_w = (kReportWidthPx - 2 * kMargin) / static_cast<float>(cols);
    // Column offsets within a table column, from the widths of what they
    // hold: ratio | name | count | mean ± s.d. | words. The name and the
    // words share what is left; text is shortened with "…" only when a
    // column cannot hold it, never drawn over its neighbour.
    const float gap = 18.0f;
    auto mean_text = [](const ReportRow& r) {
        std::string mean = signed_cents(r.mean_dev_cents, 1);
        if (r.count > 1) mean += " \u00b1 " + signed_cents(r.spread_cents, 1).substr(r.spread_cents > 0.05 ? 1 : 0);
        return mean + " c";
    };
    float w_ratio = 0.0f, w_name = 0.0f, w_words = 0.0f;
    float w_count = ink.size(ink.body, plural).x, w_mean = ink.size(ink.body, "mean \u00b1 s.d.").x;
    for (const ReportRow& r : d.summary) {
        w_ratio = std::max(w_ratio, ink.size(ink.bold, r.ratio).x);
        w_name = std::max(w_name, ink.size(ink.body, r.name).x);
        w_count = std::max(w_count, ink.size(ink.body, std::to_string(r.count)).x);
        w_mean = std::max(w_mean, ink.size(ink.bold, mean_text(r)).x);
        w_words = std::max(w_words, ink.size(ink.body, r.words).x);
    }
    const float usable = col_w - 20.0f;
    const float fixed = w_ratio + gap + w_count + gap + w_mean + gap;
    const float room = std::max(0.0f, usable - fixed - gap);  // for the name and the words together
    // The words restate the mean in a sentence: when the name and the words
    // do not both fit, the words give way (the text output keeps them), and
    // only then is a name shortened.
    const bool with_words = w_name + gap + w_words <= room;
    const float name_w = with_words ? w_name : room + gap;
    const float c_ratio = 0.0f, c_name = w_ratio + gap, c_count = c_name + name_w + gap,
                c_mean = c_count + w_count + gap, c_words = c_mean + w_mean + gap;
    for (int c = 0; c < cols; ++c) {
        const float x = kMargin + static_cast<float>(c) * col_w;
        ink.text(ink.body, x + c_count, y0, kSoftInk, plural);
        ink.text(ink.body, x + c_mean, y0, kSoftInk, "mean \u00b1 s.d.");
    }
    const std::size_t fit = static_cast<std::size_t>(per_col * cols);
    const std::size_t shown = d.summary.size() > fit ? fit - 1 : d.summary.size();
    for (std::size_t i = 0; i < shown; ++i) {
        const ReportRow& r = d.summary[i];
        const int c = static_cast<int>(i) / per_col;
        const float x = kMargin + static_cast<float>(c) * col_w;
        const float y = row0 + static_cast<float>(static_cast<int>(i) % per_col) * lh;
        if (i % 2 == 0)
            ink.dl->AddRectFilled(ImVec2(x - 6.0f, y - 2.0f), ImVec2(x + col_w - 16.0f, y + lh - 4.0f),
                                  rgba(243, 243, 247));
        ink.text(ink.bold, x + c_ratio, y, kInk, r.ratio);
        ink.text(ink.body, x + c_name, y, kSoftInk, fit_text(ink.body, r.name, name_w));
        ink.text(ink.body, x + c_count, y, kInk, std::to_string(r.count));
        ink.text(ink.bold, x + c_mean, y, mark_colour(r.mean_dev_cents), mean_text(r));
        if (with_words) ink.text(ink.body, x + c_words, y, kInk, r.words);
    }
    if (shown < d.summary.size()) {
        const std::size_t i = shown;
        const float x = kMargin + static_cast<float>(static_cast<int>(i) / per_col) * col_w;
        const float y = row0 + static_cast<float>(static_cast<int>(i) % per_col) * lh;
        ink.text(ink.body, x, y, kSoftInk,
                 "... and " + std::to_string(d.summary.size() - shown) + " more targets (see the text output)");
    }
}

// Under the target labels, on the plot's caption line: how many bars went
// unlabelled (kept off the summary's header row, which the second table
// column uses).
void draw_skipped_note(const Ink& ink, const ReportData& d, const ReportLayout& l, int skipped_labels) {
    if (skipped_labels <= 0) return;
    const float x = l.plot_x1 + 36.0f;
    const float y = l.plot_y1 + 8.0f + ink.body->FontSize + 4.0f;
    const std::string what = skipped_labels == 1 ? d.mark_word : d.mark_word + "s";
    ink.text(ink.body, x, y, kSoftInk,
             fit_text(ink.body, std::to_string(skipped_labels) + " " + what + " too close to label",
                      kReportWidthPx - kMargin / 2 - x));
}

}  // namespace

// ---------------------------------------------------------------------------
// [SECTION] Rendering and the PNG
// ---------------------------------------------------------------------------
void render_report(const ReportData& d, PixelBuffer& out) {
    HostConfig hc;
    hc.width_px = kReportWidthPx;
    hc.height_px = kReportHeightPx;
    hc.body_size_px = kBodyPx;
    hc.large_size_px = kTitlePx;
    ImGuiHost host(hc);
    Rasterizer raster;
    const ReportLayout l = report_layout(d);
    render_offscreen(
        host, raster, out, 1.0f / 60.0f,
        [&] {
            ImDrawList* dl = ImGui::GetBackgroundDrawList();
            const Ink ink{dl, host.font(FontFace::body), host.font(FontFace::bold), host.font(FontFace::large)};
            draw_title(ink, d);
            draw_axes(ink, d, l);
            draw_targets(ink, d, l);  // lines across the plot, labels beside it
            dl->PushClipRect(ImVec2(l.plot_x0, l.plot_y0), ImVec2(l.plot_x1, l.plot_y1), true);
            draw_trace(ink, d, l);
            const int skipped = draw_marks(ink, d, l);
            dl->PopClipRect();
            draw_skipped_note(ink, d, l, skipped);
            draw_summary(ink, d, l.plot_y1 + 2.0f * ink.body->FontSize + 40.0f);
        },
        kReportPaper);
}

void write_report(const std::string& path, const ReportData& data) {
    PixelBuffer page;
    render_report(data, page);
    write_file_safely(path, encode_png(page, path));
}

namespace {
// A note's or an interval's mark; one between targets has no target: its stem is empty and its label says so.
ReportMark mark_at(double start_s, double end_s, double cents, double target_cents, double dev_cents) {
    return ReportMark{start_s, end_s, cents, std::isfinite(target_cents) ? target_cents : cents, dev_cents};
}
ReportData with_axis(ReportData d, const char* axis_label, const char* mark_word, double dur_s,
                     const pitch::DecimatedTrace& trace) {
    d.axis_label = axis_label;
    d.mark_word = mark_word;
    d.dur_s = dur_s;
    d.trace = &trace;
    return d;
}
}  // namespace

ReportData one_voice_report_data(const pitch::TargetSet& set, const OneVoiceAnalysis& a) {
    ReportData d = report_of(set, a.notes, a.summary, false, [](const pitch::NoteResult& n) {
        return mark_at(n.start_s, n.end_s, n.cents_above_root, n.target_cents, n.dev_cents);
    });
    for (std::size_t i = 0; i < d.marks.size() && i < a.judged.size(); ++i)
        d.marks[i].none_word = no_deviation_word(a.judged[i], false);
    return with_axis(std::move(d), "cents above the root", "note", a.info.dur_s(), a.trace);
}

ReportData two_voice_report_data(const pitch::TargetSet& set, const TwoVoiceAnalysis& a) {
    ReportData d = report_of(set, a.dyads, a.summary, true, [](const pitch::DyadResult& y) {
        return mark_at(y.start_s, y.end_s, y.interval_cents, y.target_cents, y.dev_cents);
    });
    for (std::size_t i = 0; i < d.marks.size() && i < a.judged.size(); ++i)
        d.marks[i].none_word = no_deviation_word(a.judged[i], false);
    return with_axis(std::move(d), "cents above the low voice", "interval", a.info.dur_s(), a.trace);
}

}  // namespace beatless::ui
