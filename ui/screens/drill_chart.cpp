// Drill chart — see drill_chart.h.
#include "ui/screens/drill_chart.h"

#include "pitch/base/error.h"
#include "pitch/base/text.h"
#include "ui/screens/palette.h"
#include "ui/screens/screen.h"
#include "ui/screens/widgets.h"

#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <map>

namespace beatless::ui {

namespace {

constexpr int kHistoryDays = 30;  // the plots show at most the last 30 days

std::string day_text(long day) {
    using namespace std::chrono;
    const year_month_day ymd{sys_days{days{day}}};
    char buf[16];
    std::snprintf(buf, sizeof buf, "%04d-%02u-%02u", static_cast<int>(ymd.year()), static_cast<unsigned>(ymd.month()),
                  static_cast<unsigned>(ymd.day()));
    return buf;
}

enum class PlotKind { hold, threshold, share };

// The latest point in words: "+3.2 c", "4.3 c (3.4 to 6.3)", "finer than 0.5 c", "62 % right".
std::string latest_text(const ProgressPoint& p, PlotKind k) {
    switch (k) {
        case PlotKind::hold: return signed_text(p.value, 1) + " c";
        case PlotKind::share: return std::to_string(std::lround(100.0 * p.value)) + " % right";
        case PlotKind::threshold: break;
    }
    if (p.finer) return "finer than " + pitch::format_trimmed(p.value, 2) + " c";
    const auto num = [](double c) { return pitch::format_trimmed(c, c < 10.0 ? 1 : 0); };
    return num(p.value) + " c (" + (p.lo > 0.0 ? num(p.lo) : std::string("below")) + " to " + num(p.hi) + ")";
}

void small_plot(ImDrawList* dl, const DrillProgressSeries& s, PlotKind kind, double tol, float x0, float y0, float w,
                float h) {
    std::vector<ImVec2> points;
    const float u = ui_unit();
    const bool hold = kind == PlotKind::hold;
    dl->AddRectFilled(ImVec2(x0, y0), ImVec2(x0 + w, y0 + h), palette::kPanelRaised, std::round(0.2f * u));
    const char* label = kind == PlotKind::threshold ? "threshold per day, with its 95 % interval"
                        : kind == PlotKind::share   ? "share right per day"
                                                    : s.key.c_str();
    draw_text(dl, FontFace::bold, ImVec2(x0 + std::round(0.4f * u), y0 + std::round(0.2f * u)), palette::kText, label);
    if (!s.points.empty()) {
        const ProgressPoint& latest = s.points.back();
        const std::string v = latest_text(latest, kind);
        const std::uint32_t col = hold ? tuning_colour(tuning_of(latest.value, tol)) : palette::kText;
        draw_text(dl, FontFace::bold,
                  ImVec2(x0 + w - std::round(0.4f * u) - text_size(FontFace::bold, v).x, y0 + std::round(0.2f * u)),
                  col, v);
    }
    const float px0 = x0 + std::round(0.5f * u), px1 = x0 + w - std::round(0.5f * u);
    const float py0 = y0 + std::round(1.35f * u), py1 = y0 + h - std::round(0.3f * u);
    if (py1 - py0 < 0.8f * u) return;
    if (s.points.empty()) {
        const std::string why =
            kind == PlotKind::threshold && s.no_threshold_days > 0 ? "no reliable threshold" : "not yet";
        draw_text_centred(dl, FontFace::body, 0.5f * (px0 + px1), 0.5f * (py0 + py1) - 0.5f * u, palette::kTextFaint,
                          why);
        return;
    }
    const long last_day = s.points.back().day;
    const long first_day = std::max(s.points.front().day, last_day - (kHistoryDays - 1));
    const double days = static_cast<double>(std::max(1L, last_day - first_day));
    auto x_of = [&](long d) {
        return last_day == first_day ? 0.5f * (px0 + px1)
                                     : px0 + static_cast<float>((d - first_day) / days) * (px1 - px0);
    };
    double lo = 0.0, hi = 1.0;
    if (kind == PlotKind::threshold) {
        for (const auto& p : s.points)
            if (p.day >= first_day) hi = std::max(hi, 1.15 * (std::isfinite(p.hi) ? p.hi : p.value));
    } else if (hold) {
        double m = 2.0 * tol;
        for (const auto& p : s.points)
            if (p.day >= first_day) m = std::max(m, std::fabs(p.value) * 1.15);
        lo = -m;
        hi = m;
        const auto yb = [&](double c) {
            return std::round(py1 - static_cast<float>((c - lo) / (hi - lo)) * (py1 - py0));
        };
        dl->AddRectFilled(ImVec2(px0, yb(tol)), ImVec2(px1, yb(-tol)), palette::kInTuneZone);
        dl->AddRectFilled(ImVec2(px0, yb(0.0)), ImVec2(px1, yb(0.0) + 1), palette::kCurrentTarget);
    }
    auto y_of = [&](double c) {
        return std::round(py1 - static_cast<float>((std::clamp(c, lo, hi) - lo) / (hi - lo)) * (py1 - py0));
    };
    if (!hold) {  // the scale: its top and its bottom
        const bool thr = kind == PlotKind::threshold;
        const std::string top = thr ? pitch::format_trimmed(hi, hi < 10.0 ? 1 : 0) + " c" : std::string("100 %");
        draw_text(dl, FontFace::body, ImVec2(px0, py0), palette::kTextFaint, top);
        draw_text(dl, FontFace::body, ImVec2(px0, py1 - u), palette::kTextFaint, thr ? "0 c" : "0 %");
    }
    for (const auto& p : s.points)
        if (p.day >= first_day) points.emplace_back(x_of(p.day), y_of(p.value));
    if (points.size() >= 2)
        dl->AddPolyline(points.data(), static_cast<int>(points.size()), palette::kTextDim, ImDrawFlags_None, 1.5f);
    const float rad = std::round(0.22f * u);
    std::size_t k = 0;
    for (const auto& p : s.points) {
        if (p.day < first_day) continue;
        const ImVec2 c = points[k++];
        if (std::isfinite(p.hi)) {  // the interval as a whisker with caps
            const float ylo = y_of(std::max(p.lo, 0.0)), yhi = y_of(p.hi);
            dl->AddRectFilled(ImVec2(c.x - 1, yhi), ImVec2(c.x + 1, ylo), palette::kTextDim);
            dl->AddRectFilled(ImVec2(c.x - rad, yhi - 1), ImVec2(c.x + rad, yhi + 1), palette::kTextDim);
            dl->AddRectFilled(ImVec2(c.x - rad, ylo - 1), ImVec2(c.x + rad, ylo + 1), palette::kTextDim);
        }
        if (p.finer)
            draw_tuning_shape(dl, Tuning::flat, c, rad * 1.3f, palette::kInTune);  // pointing down: finer than this
        else
            dl->AddCircleFilled(c, rad, palette::kText, 12);
    }
    // A wide plot (the ear results) names its first and last day.
    if (w > 20.0f * u && first_day != last_day) {
        const std::string from = day_text(first_day), to = day_text(last_day);
        const float fx = hold ? px0 : px0 + std::round(3.0f * u);  // right of the scale's "0 c"
        draw_text(dl, FontFace::body, ImVec2(fx, py1 - u), palette::kTextFaint, from);
        draw_text(dl, FontFace::body, ImVec2(px1 - text_size(FontFace::body, to).x, py1 - u), palette::kTextFaint, to);
    }
}

}  // namespace

void draw_drill_progress(ImDrawList* dl, const DrillProgress& hist, const Drill& drill, float x0, float y0, float w,
                         float h) {
    const float u = ui_unit();
    draw_panel(dl, x0, y0, w, h);
    const Drill* d = &drill;
    const bool ear = d->mode == DrillMode::ear;
    const std::string head =
        ear ? (d->task == ui::EarTask::discriminate
                   ? "History of " + d->title +
                         ": the threshold fitted to each day's answers, in cents (lower is finer)"
                   : "History of " + d->title + ": the share named right per day")
            : "History of " + d->title +
                  (hist.voices == 2 ? " on two voices: the interval's mean deviation" : ": mean deviation") +
                  " per target per day, in cents (band \xC2\xB1" + pitch::format_trimmed(d->tolerance_cents, 1) + " c)";
    draw_text(dl, FontFace::body, ImVec2(x0 + u, y0 + std::round(0.3f * u)), palette::kTextDim, head);
    const float gy = y0 + std::round(1.5f * u);
    const float gh = y0 + h - gy - std::round(0.4f * u);
    if (!hist.note.empty() || hist.series.empty()) {
        draw_text(dl, FontFace::body, ImVec2(x0 + u, gy + std::round(0.3f * u)), palette::kTextFaint,
                  hist.note.empty() ? std::string("No attempts of this drill in the practice log yet.") : hist.note);
        return;
    }
    if (gh < 2.5f * u) return;
    const float gap = std::round(0.5f * u);
    const float inner = w - 2.0f * u;
    const std::size_t n = hist.series.size();
    const int rows_fit = std::max(1, static_cast<int>((gh + gap) / (3.2f * u + gap)));
    int cols = std::max(1, static_cast<int>((inner + gap) / (7.5f * u + gap)));
    if (ear) cols = 1;
    cols = std::min<int>(cols, static_cast<int>(n));
    const int rows =
        std::min(rows_fit, static_cast<int>((n + static_cast<std::size_t>(cols) - 1) / static_cast<std::size_t>(cols)));
    const float cw = std::floor((inner - gap * static_cast<float>(cols - 1)) / static_cast<float>(cols));
    const float ch = std::floor((gh - gap * static_cast<float>(rows - 1)) / static_cast<float>(rows));
    const std::size_t shown = std::min(n, static_cast<std::size_t>(rows * cols));
    for (std::size_t i = 0; i < shown; ++i) {
        const int c = static_cast<int>(i) % cols, r = static_cast<int>(i) / cols;
        const PlotKind kind = !ear                                   ? PlotKind::hold
                              : d->task == ui::EarTask::discriminate ? PlotKind::threshold
                                                                     : PlotKind::share;
        small_plot(dl, hist.series[i], kind, d->tolerance_cents, x0 + u + static_cast<float>(c) * (cw + gap),
                   gy + static_cast<float>(r) * (ch + gap), cw, ch);
    }
    if (shown < n) {
        std::string more = "+";  // (appended: GCC 12 warns falsely, -Wrestrict, on "+" + std::string)
        more.append(std::to_string(n - shown)).append(" more (beatless history)");
        draw_text(dl, FontFace::body, ImVec2(x0 + w - u - text_size(FontFace::body, more).x, y0 + std::round(0.3f * u)),
                  palette::kTextDim, more);
    }
}

}  // namespace beatless::ui
