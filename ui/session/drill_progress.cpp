// Drill progress — see drill_progress.h.
#include "ui/session/drill_progress.h"

#include "pitch/base/error.h"
#include "ui/session/log_summary.h"
#include "ui/session/practice_log.h"

#include <chrono>
#include <cmath>
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

DrillProgress read_drill_progress(const std::string& log_path, const Drill& drill, bool simulated, int voices) {
    DrillProgress out;
    const Drill* d = &drill;
    out.voices = d->mode == DrillMode::hold && voices == 2 ? 2 : 1;
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
        if (d->mode == DrillMode::ear) {  // refitted from every answer of each day, as `beatless history --by day`
            AttemptFilter f;
            f.drill = d->id;
            f.simulated = simulated;
            DrillProgressSeries ps{d->id, d->title, {}, 0, 0};
            for (const EarPeriodFit& e : fit_ear_periods(log, f, Period::day)) {
                if (e.period == "all") continue;
                const long day = day_number(e.period);
                if (!e.discriminate) {
                    if (e.answers > 0)
                        ps.points.push_back(
                            {day, static_cast<double>(e.right) / static_cast<double>(e.answers), NAN, NAN, false});
                    continue;
                }
                if (e.estimate.verdict == ui::ThresholdVerdict::measured)
                    ps.points.push_back(
                        {day, e.estimate.threshold_cents, e.estimate.lo_cents, e.estimate.hi_cents, false});
                else if (e.estimate.verdict == ui::ThresholdVerdict::finer)
                    ps.points.push_back({day, e.estimate.smallest_cents, NAN, NAN, true});
                else
                    ++ps.no_threshold_days;
            }
            ps.attempts = log.count(f);
            if (ps.points.empty() && ps.no_threshold_days == 0)
                out.note = "No attempts of this drill in the practice log yet.";
            else
                out.series.push_back(std::move(ps));
            return out;
        }
        HistoryOptions ho;
        ho.filter.drill = d->id;
        ho.filter.simulated = simulated;
        ho.filter.voices = out.voices;
        ho.by = Period::day;
        const HistorySummary sum = summarize_history(log, ho);
        std::map<std::string, std::size_t> at;
        for (const DrillTarget& t : d->targets) {  // the drill's targets in its order, each once
            const std::string k = t.target.interval.str();
            if (at.count(k)) continue;
            at[k] = out.series.size();
            out.series.push_back({k, t.target.name, {}, 0, 0});
        }
        for (const HistoryLine& l : sum.over_time) {
            if (l.kind != AttemptKind::hold || !std::isfinite(l.mean_dev_cents)) continue;
            if (!at.count(l.key)) {
                at[l.key] = out.series.size();
                out.series.push_back({l.key, l.name, {}, 0, 0});
            }
            DrillProgressSeries& ps = out.series[at[l.key]];
            ps.points.push_back({day_number(l.period), l.mean_dev_cents, NAN, NAN, false});
            ps.attempts += l.attempts;
        }
        if (sum.attempts == 0)
            out.note = out.voices == 2 ? "No two-voice attempts of this drill in the practice log yet."
                                       : "No attempts of this drill in the practice log yet.";
    } catch (const Error& e) {
        out.note = e.what();
    }
    return out;
}

}  // namespace beatless::ui
