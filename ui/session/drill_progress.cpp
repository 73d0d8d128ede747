// Drill progress — see drill_progress.h.
#include "ui/session/drill_progress.h"

#include "pitch/base/error.h"
#include "ui/session/log_summary.h"
#include "ui/session/practice_log.h"
#include "ui/session/threshold_fit.h"

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

DrillProgress read_drill_progress(const std::string& log_path, const Drill& drill, bool simulated) {
    DrillProgress out;
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
        if (d->mode == DrillMode::ear) {
            AttemptFilter f;
            f.drill = d->id;
            f.simulated = simulated;
            const bool disc = d->task == ui::EarTask::discriminate;
            const std::string method = disc ? "discriminate" : "identify";
            std::map<long, std::vector<ui::LevelAnswer>> by_day;
            std::map<long, std::pair<double, int>> share_by_day;  // right, answers
            DrillProgressSeries ps{d->id, d->title, {}, 0, 0};
            log.for_each(f, true, [&](const Attempt& a) {
                if (a.kind != AttemptKind::ear || a.method.rfind(method, 0) != 0) return;
                ++ps.attempts;
                const long day = day_number(a.started_at.substr(0, 10));
                for (const TraceRecord& r : a.trace) {
                    const bool right = r.centre_dev_cents > 0.5f;
                    if (disc) by_day[day].push_back({r.f0_hz, right});
                    auto& sd = share_by_day[day];
                    sd.first += right ? 1.0 : 0.0;
                    sd.second += 1;
                }
            });
            if (disc) {
                for (const auto& [day, answers] : by_day) {
                    const ui::ThresholdEstimate e = ui::fit_threshold(answers, d->fit_config());
                    if (e.verdict == ui::ThresholdVerdict::measured) ps.points.push_back({day, e.threshold_cents, e.lo_cents, e.hi_cents, false});
                    else if (e.verdict == ui::ThresholdVerdict::finer) ps.points.push_back({day, e.smallest_cents, NAN, NAN, true});
                    else ++ps.no_threshold_days;
                }
            } else {
                for (const auto& [day, sd] : share_by_day)
                    if (sd.second > 0) ps.points.push_back({day, sd.first / sd.second, NAN, NAN, false});
            }
            if (ps.attempts == 0) out.note = "No attempts of this drill in the practice log yet.";
            else out.series.push_back(std::move(ps));
            return out;
        }
        HistoryOptions ho;
        ho.filter.drill = d->id;
        ho.filter.simulated = simulated;
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
        if (sum.attempts == 0) out.note = "No attempts of this drill in the practice log yet.";
    } catch (const Error& e) {
        out.note = e.what();
    }
    return out;
}

}  // namespace beatless::ui
