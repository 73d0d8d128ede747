// Drill history — see drill_history.h.
//
// Index: [read] [plots]
#include "ui/drill_history.h"

#include "pitch/error.h"
#include "pitch/text.h"
#include "ui/draw_kit.h"
#include "ui/history.h"
#include "ui/palette.h"
#include "ui/practice_log.h"
#include "ui/screen.h"

#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <map>

namespace beatless::ui {

long day_number(const std::string& day) {
    using namespace std::chrono;
    if (day.size() < 10) return 0;
    const int y = std::atoi(day.substr(0, 4).c_str());
    const unsigned m = static_cast<unsigned>(std::atoi(day.substr(5, 2).c_str()));
    const unsigned d = static_cast<unsigned>(std::atoi(day.substr(8, 2).c_str()));
    return static_cast<long>(sys_days{year{y} / month{m} / std::chrono::day{d}}.time_since_epoch().count());
}

// ---------------------------------------------------------------------------
// [read]
// ---------------------------------------------------------------------------

DrillHistory read_drill_history(const std::string& log_path, const Drill& drill, bool simulated) {
    DrillHistory out;
    const Drill* d = &drill;
    if (log_path.empty()) {
        out.note = "No practice log in use (a snapshot without --log).";
        return out;
    }
    std::error_code ec;
    if (!std::filesystem::exists(log_path, ec)) {
        out.note = "Nothing in the practice log yet: your attempts will show here.";
        return out;
    }
    try {
        LogOptions lo;
        lo.read_only = true;
        PracticeLog log(log_path, lo);
        HistoryOptions ho;
        ho.filter.drill = d->id;
        ho.filter.simulated = simulated;
        ho.by = Period::day;
        const HistorySummary sum = summarize_history(log, ho);
        std::map<std::string, std::size_t> at;
        if (d->mode == DrillMode::hold) {  // the drill's targets in its order, each once
            for (const DrillTarget& t : d->targets) {
                const std::string k = t.target.interval.str();
                if (at.count(k)) continue;
                at[k] = out.series.size();
                out.series.push_back({k, t.target.name, {}, 0});
            }
        }
        for (const HistoryLine& l : sum.over_time) {
            const bool want = d->mode == DrillMode::hold ? l.kind == AttemptKind::hold : l.kind == AttemptKind::ear;
            const double v = l.kind == AttemptKind::hold ? l.mean_dev_cents : l.threshold_cents;
            if (!want || !std::isfinite(v)) continue;
            if (!at.count(l.key)) {
                at[l.key] = out.series.size();
                out.series.push_back({l.key, l.name, {}, 0});
            }
            DrillHistorySeries& ps = out.series[at[l.key]];
            ps.points.emplace_back(day_number(l.period), v);
            ps.attempts += l.attempts;
        }
        if (sum.attempts == 0) out.note = "No attempts of this drill in the practice log yet.";
    } catch (const Error& e) {
        out.note = e.what();
    }
    return out;
}

// ---------------------------------------------------------------------------
// [plots]
// ---------------------------------------------------------------------------

namespace {

constexpr int kHistoryDays = 30;  // the plots show at most the last 30 days

std::string day_text(long day) {
    using namespace std::chrono;
    const year_month_day ymd{sys_days{days{day}}};
    char buf[16];
    std::snprintf(buf, sizeof buf, "%04d-%02u-%02u", static_cast<int>(ymd.year()), static_cast<unsigned>(ymd.month()), static_cast<unsigned>(ymd.day()));
    return buf;
}

void small_plot(ImDrawList* dl, const DrillHistorySeries& s, bool ear, double tol, float x0, float y0, float w, float h) {
    std::vector<ImVec2> points;
    const float u = ui_unit();
    dl->AddRectFilled(ImVec2(x0, y0), ImVec2(x0 + w, y0 + h), palette::kPanelRaised, std::round(0.2f * u));
    draw_text(dl, FontFace::bold, ImVec2(x0 + std::round(0.4f * u), y0 + std::round(0.2f * u)), palette::kText, ear ? "threshold" : s.key);
    if (!s.points.empty()) {
        const double latest = s.points.back().second;
        const std::string v = ear ? pitch::format_trimmed(latest, 1) + " c" : signed_text(latest, 1) + " c";
        const std::uint32_t col = ear ? palette::kText : tuning_colour(tuning_of(latest, tol));
        draw_text(dl, FontFace::bold, ImVec2(x0 + w - std::round(0.4f * u) - text_size(FontFace::bold, v).x, y0 + std::round(0.2f * u)), col, v);
    }
    const float px0 = x0 + std::round(0.5f * u), px1 = x0 + w - std::round(0.5f * u);
    const float py0 = y0 + std::round(1.35f * u), py1 = y0 + h - std::round(0.3f * u);
    if (py1 - py0 < 0.8f * u) return;
    if (s.points.empty()) {
        draw_text_centred(dl, FontFace::body, 0.5f * (px0 + px1), 0.5f * (py0 + py1) - 0.5f * u, palette::kTextFaint, "not yet");
        return;
    }
    const long last_day = s.points.back().first;
    const long first_day = std::max(s.points.front().first, last_day - (kHistoryDays - 1));
    const double days = static_cast<double>(std::max(1L, last_day - first_day));
    auto x_of = [&](long d) { return last_day == first_day ? 0.5f * (px0 + px1) : px0 + static_cast<float>((d - first_day) / days) * (px1 - px0); };
    double lo, hi;
    if (ear) {
        lo = 0.0;
        hi = 1.0;
        for (const auto& p : s.points) hi = std::max(hi, 1.2 * p.second);
    } else {
        double m = 2.0 * tol;
        for (const auto& p : s.points)
            if (p.first >= first_day) m = std::max(m, std::fabs(p.second) * 1.15);
        lo = -m;
        hi = m;
        const auto yb = [&](double c) { return std::round(py1 - static_cast<float>((c - lo) / (hi - lo)) * (py1 - py0)); };
        dl->AddRectFilled(ImVec2(px0, yb(tol)), ImVec2(px1, yb(-tol)), palette::kInTuneZone);
        dl->AddRectFilled(ImVec2(px0, yb(0.0)), ImVec2(px1, yb(0.0) + 1), palette::kCurrentTarget);
    }
    auto y_of = [&](double c) { return std::round(py1 - static_cast<float>((std::clamp(c, lo, hi) - lo) / (hi - lo)) * (py1 - py0)); };
    points.clear();
    for (const auto& p : s.points)
        if (p.first >= first_day) points.emplace_back(x_of(p.first), y_of(p.second));
    if (points.size() >= 2) dl->AddPolyline(points.data(), static_cast<int>(points.size()), palette::kTextDim, ImDrawFlags_None, 1.5f);
    const float rad = std::round(0.22f * u);
    for (const ImVec2& p : points) dl->AddCircleFilled(p, rad, palette::kText, 12);
    // A wide plot (the ear threshold) names its first and last day.
    if (w > 20.0f * u && first_day != last_day) {
        const std::string from = day_text(first_day), to = day_text(last_day);
        draw_text(dl, FontFace::body, ImVec2(px0, py1 - u), palette::kTextFaint, from);
        draw_text(dl, FontFace::body, ImVec2(px1 - text_size(FontFace::body, to).x, py1 - u), palette::kTextFaint, to);
    }
}

}  // namespace

void draw_drill_history(ImDrawList* dl, const DrillHistory& hist, const Drill& drill, float x0, float y0, float w, float h) {
    const float u = ui_unit();
    draw_panel(dl, x0, y0, w, h);
    const Drill* d = &drill;
    const bool ear = d->mode == DrillMode::ear;
    const std::string head = ear ? "History of " + d->title + ": the threshold per day, in cents (lower is finer)"
                                 : "History of " + d->title + ": mean deviation per target per day, in cents (band \xC2\xB1" +
                                       pitch::format_trimmed(d->tolerance_cents, 1) + " c)";
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
    const int rows = std::min(rows_fit, static_cast<int>((n + static_cast<std::size_t>(cols) - 1) / static_cast<std::size_t>(cols)));
    const float cw = std::floor((inner - gap * static_cast<float>(cols - 1)) / static_cast<float>(cols));
    const float ch = std::floor((gh - gap * static_cast<float>(rows - 1)) / static_cast<float>(rows));
    const std::size_t shown = std::min(n, static_cast<std::size_t>(rows * cols));
    for (std::size_t i = 0; i < shown; ++i) {
        const int c = static_cast<int>(i) % cols, r = static_cast<int>(i) / cols;
        small_plot(dl, hist.series[i], ear, d->tolerance_cents, x0 + u + static_cast<float>(c) * (cw + gap), gy + static_cast<float>(r) * (ch + gap), cw, ch);
    }
    if (shown < n) {
        std::string more = "+";  // (appended: GCC 12 warns falsely, -Wrestrict, on "+" + std::string)
        more.append(std::to_string(n - shown)).append(" more (beatless history)");
        draw_text(dl, FontFace::body, ImVec2(x0 + w - u - text_size(FontFace::body, more).x, y0 + std::round(0.3f * u)), palette::kTextDim, more);
    }
}

}  // namespace beatless::ui
