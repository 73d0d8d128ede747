#include "ui/session/log_summary.h"

#include "ui/session/drill_files.h"

#include "pitch/base/text.h"
#include "pitch/theory/interval.h"
#include "ui/session/json.h"
#include "ui/session/log_csv.h"

#include <algorithm>
#include <chrono>
#include <cstdio>
#include <map>
#include <tuple>

namespace beatless::ui {

std::string_view period_name(Period p) {
    switch (p) {
        case Period::day: return "day";
        case Period::week: return "week";
        default: return "month";
    }
}

std::string period_start(const std::string& day, Period p) {
    if (p == Period::day || day.size() < 10) return day;
    if (p == Period::month) return day.substr(0, 7);
    using namespace std::chrono;
    const int y = std::stoi(day.substr(0, 4));
    const unsigned m = static_cast<unsigned>(std::stoi(day.substr(5, 2)));
    const unsigned d = static_cast<unsigned>(std::stoi(day.substr(8, 2)));
    const sys_days sd{year{y} / month{m} / std::chrono::day{d}};
    const unsigned since_monday = (weekday{sd}.iso_encoding() + 6) % 7;  // Monday 0 .. Sunday 6
    const year_month_day start{sd - days{since_monday}};
    char buf[16];
    std::snprintf(buf, sizeof buf, "%04d-%02u-%02u", static_cast<int>(start.year()),
                  static_cast<unsigned>(start.month()), static_cast<unsigned>(start.day()));
    return buf;
}

namespace {

struct Acc {
    std::string name;
    std::int64_t attempts = 0, locked = 0, locked_n = 0;
    double ttl = 0, dev = 0, spread = 0, in_tol = 0, thr = 0;
    std::int64_t ttl_n = 0, dev_n = 0, spread_n = 0, in_tol_n = 0, thr_n = 0;

    void add(const HistoryGroup& g) {
        if (name.empty()) name = g.name;
        attempts += g.attempts;
        locked += g.locked, locked_n += g.locked_n;
        ttl += g.time_to_lock_sum, ttl_n += g.time_to_lock_n;
        dev += g.mean_dev_sum, dev_n += g.mean_dev_n;
        spread += g.spread_sum, spread_n += g.spread_n;
        in_tol += g.in_tol_sum, in_tol_n += g.in_tol_n;
        thr += g.threshold_sum, thr_n += g.threshold_n;
    }
    HistoryLine line(AttemptKind kind, const std::string& key, int voices, const std::string& period) const {
        auto mean = [](double sum, std::int64_t n) { return n > 0 ? sum / static_cast<double>(n) : NAN; };
        HistoryLine l;
        l.kind = kind;
        l.voices = voices;
        l.period = period;
        l.key = key;
        l.name = name;
        l.attempts = attempts;
        l.locked_share = mean(static_cast<double>(locked), locked_n);
        l.time_to_lock_s = mean(ttl, ttl_n);
        l.mean_dev_cents = mean(dev, dev_n);
        l.spread_cents = mean(spread, spread_n);
        l.in_tolerance_share = mean(in_tol, in_tol_n);
        l.threshold_cents = mean(thr, thr_n);
        return l;
    }
};

double target_cents(const std::string& target) {
    try {
        return pitch::parse_interval(target).cents();
    } catch (const Error&) {
        return INFINITY;  // not an interval: after the others
    }
}

}  // namespace

std::vector<EarPeriodFit> fit_ear_periods(const PracticeLog& log, const AttemptFilter& filter, Period by) {
    struct Pool {
        std::vector<ui::LevelAnswer> answers;
        std::int64_t right = 0, n = 0;
    };
    std::map<std::string, Pool> pools;  // "all" and each period (ISO days sort in time order)
    bool disc = false, any = false;
    std::string method;
    double lo_played = INFINITY, hi_played = 0.0;
    log.for_each(filter, true, [&](const Attempt& a) {
        if (a.kind != AttemptKind::ear || a.method.empty()) return;
        if (!any) method = a.method, disc = a.method.rfind("discriminate", 0) == 0, any = true;
        if (a.method != method) return;  // one drill, one method
        for (const std::string& p : {std::string("all"), period_start(a.started_at.substr(0, 10), by)}) {
            Pool& pool = pools[p];
            for (const TraceRecord& r : a.trace) {
                const bool right = r.centre_dev_cents > 0.5f;
                if (disc) pool.answers.push_back({r.f0_hz, right});
                pool.right += right ? 1 : 0;
                ++pool.n;
                if (disc && p == "all")
                    lo_played = std::min(lo_played, static_cast<double>(r.f0_hz)),
                    hi_played = std::max(hi_played, static_cast<double>(r.f0_hz));
            }
        }
    });
    std::vector<EarPeriodFit> out;
    if (!any) return out;
    ui::FitConfig fc;
    try {  // the drill's own levels and rule, as its sessions were fitted
        fc = load_drill(filter.drill).fit_config();
    } catch (const Error&) {  // a drill file no longer found: its rule from the method, the levels played
        fc.threshold_p = method.find("3-down") != std::string::npos ? std::pow(0.5, 1.0 / 3.0) : std::pow(0.5, 0.5);
        fc.min_cents = std::max(lo_played, 1e-3);
        fc.max_cents = std::max(hi_played, fc.min_cents * 2.0);
    }
    for (const auto& [p, pool] : pools) {
        EarPeriodFit f;
        f.period = p;
        f.discriminate = disc;
        f.right = pool.right;
        f.answers = pool.n;
        if (disc) f.estimate = ui::fit_threshold(pool.answers, fc);
        if (p == "all")
            out.insert(out.begin(), f);
        else
            out.push_back(f);
    }
    return out;
}

HistorySummary summarize_history(const PracticeLog& log, const HistoryOptions& o) {
    HistorySummary s;
    s.log_path = log.path().string();
    s.since = o.filter.since;
    s.by = o.by;
    if (!o.filter.simulated) {
        AttemptFilter all = o.filter;
        all.simulated = true;
        s.simulated_left_out = log.count(all) - log.count(o.filter);
    }
    // Groups come sorted by (kind, key, voices, day): fold the days of each key
    // into its total and its periods, converting each day to its period once.
    // One voice and two voices on one target are two keys: a double stop's
    // interval is not the same skill as one voice against the drone.
    struct Keyed {
        AttemptKind kind;
        std::string key;
        int voices;
        double cents;
        Acc total;
        std::vector<std::pair<std::string, Acc>> periods;  // in time order
    };
    std::vector<Keyed> keys;
    for (const HistoryGroup& g : log.history_groups(o.filter)) {
        if (keys.empty() || keys.back().kind != g.kind || keys.back().key != g.key || keys.back().voices != g.voices)
            keys.push_back({g.kind, g.key, g.voices, g.kind == AttemptKind::hold ? target_cents(g.key) : 0.0, {}, {}});
        Keyed& k = keys.back();
        k.total.add(g);
        const std::string p = period_start(g.day, o.by);
        if (k.periods.empty() || k.periods.back().first != p) k.periods.push_back({p, {}});
        k.periods.back().second.add(g);
        s.attempts += g.attempts;
    }
    // Holds first, ordered by the target's pitch (one voice before two); then ear drills by id.
    std::stable_sort(keys.begin(), keys.end(), [](const Keyed& a, const Keyed& b) {
        if (a.kind != b.kind) return a.kind == AttemptKind::hold;
        if (a.cents != b.cents) return a.cents < b.cents;
        return a.voices < b.voices;
    });
    for (const Keyed& k : keys) s.totals.push_back(k.total.line(k.kind, k.key, k.voices, "all"));
    for (const Keyed& k : keys)
        for (const auto& [p, acc] : k.periods) s.over_time.push_back(acc.line(k.kind, k.key, k.voices, p));
    // Ear drills: the estimate from every answer of the period, not a mean of
    // sessions; rows before schema 3 (no method) measured nothing and add none.
    for (auto* lines : {&s.totals, &s.over_time})
        for (HistoryLine& l : *lines)
            if (l.kind == AttemptKind::ear) l.threshold_cents = NAN;
    for (const Keyed& k : keys) {
        if (k.kind != AttemptKind::ear) continue;
        AttemptFilter f = o.filter;
        f.drill = k.key;
        for (const EarPeriodFit& e : fit_ear_periods(log, f, o.by)) {
            for (auto* lines : {&s.totals, &s.over_time})
                for (HistoryLine& l : *lines) {
                    if (l.kind != AttemptKind::ear || l.key != k.key || l.period != e.period) continue;
                    l.correct_share =
                        e.answers > 0 ? static_cast<double>(e.right) / static_cast<double>(e.answers) : NAN;
                    l.threshold_cents = NAN;
                    if (!e.discriminate) continue;
                    const ui::ThresholdEstimate& t = e.estimate;
                    l.estimate = t.verdict == ui::ThresholdVerdict::measured ? "measured"
                                 : t.verdict == ui::ThresholdVerdict::finer  ? "finer"
                                                                             : "none";
                    l.threshold_cents = t.threshold_cents;
                    l.threshold_lo_cents = t.lo_cents;
                    l.threshold_hi_cents = t.verdict == ui::ThresholdVerdict::finer ? t.smallest_cents : t.hi_cents;
                }
        }
    }
    return s;
}

// ---- Rendering -------------------------------------------------------------

namespace {

std::string fixed(double v, int decimals, const char* unit) {
    if (!std::isfinite(v)) return "-";
    char buf[48];
    std::snprintf(buf, sizeof buf, "%.*f%s", decimals, v, unit);
    return buf;
}

std::string signed_cents(double v) {
    if (!std::isfinite(v)) return "-";
    char buf[48];
    std::snprintf(buf, sizeof buf, "%+.1f c", v);
    return buf;
}

std::string percent(double share) { return std::isfinite(share) ? fixed(100.0 * share, 0, " %") : "-"; }

void pad(std::string& out, const std::string& text, std::size_t width, bool right) {
    const std::string s = pitch::printable(text);  // drill ids and names come from files (CSV import)
    const std::size_t n = s.size() < width ? width - s.size() : 0;
    if (right) out.append(n, ' ');
    out += s;
    if (!right) out.append(n, ' ');
}

std::size_t widest(const std::vector<HistoryLine>& lines, std::string HistoryLine::*field, std::size_t at_least) {
    std::size_t w = at_least;
    for (const HistoryLine& l : lines) w = std::max(w, (l.*field).size());
    return w;
}

void hold_table(std::string& out, const std::vector<HistoryLine>& lines, bool with_period, bool with_name,
                bool with_voices, const std::string& period_head) {
    const std::size_t wk = widest(lines, &HistoryLine::key, 6);
    const std::size_t wn = widest(lines, &HistoryLine::name, 4);
    out += "  ";
    if (with_period) pad(out, period_head, 12, false);
    pad(out, "target", wk + 2, false);
    if (with_voices) pad(out, "voices", 8, false);
    if (with_name) pad(out, "name", wn + 2, false);
    out += "attempts  locked   to lock  mean dev   spread  in band\n";
    for (const HistoryLine& l : lines) {
        out += "  ";
        if (with_period) pad(out, l.period, 12, false);
        pad(out, l.key, wk + 2, false);
        if (with_voices) pad(out, l.voices == 2 ? "2" : "1", 8, false);
        if (with_name) pad(out, l.name, wn + 2, false);
        pad(out, std::to_string(l.attempts), 8, true);
        pad(out, percent(l.locked_share), 8, true);
        pad(out, fixed(l.time_to_lock_s, 2, " s"), 10, true);
        pad(out, signed_cents(l.mean_dev_cents), 10, true);
        pad(out, fixed(l.spread_cents, 1, " c"), 9, true);
        pad(out, percent(l.in_tolerance_share), 9, true);
        out += '\n';
    }
}

void ear_table(std::string& out, const std::vector<HistoryLine>& lines, bool with_period,
               const std::string& period_head) {
    const std::size_t wk = widest(lines, &HistoryLine::key, 5);
    const std::size_t wn = widest(lines, &HistoryLine::name, 7);
    out += "  ";
    if (with_period) pad(out, period_head, 12, false);
    pad(out, "drill", wk + 2, false);
    if (!with_period) pad(out, "choices", wn + 2, false);
    out += "attempts  right  threshold (95 % interval)\n";
    for (const HistoryLine& l : lines) {
        out += "  ";
        if (with_period) pad(out, l.period, 12, false);
        pad(out, l.key, wk + 2, false);
        if (!with_period) pad(out, l.name, wn + 2, false);
        pad(out, std::to_string(l.attempts), 8, true);
        pad(out,
            std::isfinite(l.correct_share) ? std::to_string(std::lround(100.0 * l.correct_share)) + " %"
                                           : std::string("-"),
            7, true);
        out += "  ";
        if (l.estimate == "measured")
            out += fixed(l.threshold_cents, 1, " c") + " (" +
                   (l.threshold_lo_cents > 0 ? fixed(l.threshold_lo_cents, 1, "") : std::string("below")) + " to " +
                   fixed(l.threshold_hi_cents, 1, " c") + ")";
        else if (l.estimate == "finer")
            out += "finer than " + fixed(l.threshold_hi_cents, 2, " c");
        else if (l.estimate == "none")
            out += "no reliable threshold";
        else
            out += "-";
        out += '\n';
    }
}

std::vector<HistoryLine> of_kind(const std::vector<HistoryLine>& lines, AttemptKind k) {
    std::vector<HistoryLine> out;
    for (const HistoryLine& l : lines)
        if (l.kind == k) out.push_back(l);
    return out;
}

}  // namespace

std::string render_history_text(const HistorySummary& s) {
    std::string out = "Practice log " + s.log_path + ": " + std::to_string(s.attempts) +
                      (s.attempts == 1 ? " attempt" : " attempts") + (s.since.empty() ? "" : " since " + s.since) +
                      "\n";
    if (s.simulated_left_out > 0) {
        out += '(';
        out += std::to_string(s.simulated_left_out);
        out += s.simulated_left_out == 1 ? " attempt" : " attempts";
        out += " by the demo performer or the simulated listener left out; --with-demo shows them)\n";
    }
    if (s.attempts == 0) return out;
    const std::string by(period_name(s.by));
    const std::string head = s.by == Period::week ? "week of" : by;
    const auto holds = of_kind(s.totals, AttemptKind::hold);
    const auto ears = of_kind(s.totals, AttemptKind::ear);
    if (!holds.empty()) {
        // A voices column only where two-voice holds (the interval of a pair, scored apart) are in the log.
        const bool pairs = std::any_of(holds.begin(), holds.end(), [](const HistoryLine& l) { return l.voices == 2; });
        out += "\nHolds per target\n";
        hold_table(out, holds, false, true, pairs, head);
        out += "\nHolds per " + by + "\n";
        hold_table(out, of_kind(s.over_time, AttemptKind::hold), true, false, pairs, head);
    }
    if (!ears.empty()) {
        out += "\nEar training per drill\n";
        ear_table(out, ears, false, head);
        out += "\nEar training threshold per " + by + "\n";
        ear_table(out, of_kind(s.over_time, AttemptKind::ear), true, head);
    }
    return out;
}

namespace {

void json_line(JsonWriter& j, const HistoryLine& l, bool with_period) {
    j.begin_object();
    if (with_period) j.key("period").value(l.period);
    j.key("kind").value(kind_name(l.kind));
    j.key(l.kind == AttemptKind::hold ? "target" : "drill").value(l.key);
    j.key(l.kind == AttemptKind::hold ? "name" : "choices").value(l.name);
    j.key("attempts").value(l.attempts);
    if (l.kind == AttemptKind::hold) {
        j.key("voices").value(static_cast<std::int64_t>(l.voices));
        j.key("locked_share").value(l.locked_share, 4);
        j.key("time_to_lock_s").value(l.time_to_lock_s, 4);
        j.key("mean_dev_cents").value(l.mean_dev_cents, 3);
        j.key("spread_cents").value(l.spread_cents, 3);
        j.key("in_tolerance_share").value(l.in_tolerance_share, 4);
    } else {
        j.key("correct_share").value(l.correct_share, 4);
        j.key("estimate");
        if (l.estimate.empty())
            j.null();
        else
            j.value(l.estimate);
        j.key("threshold_cents").value(l.threshold_cents, 3);
        j.key("threshold_lo_cents").value(l.threshold_lo_cents, 3);
        j.key("threshold_hi_cents").value(l.threshold_hi_cents, 3);
    }
    j.end_object();
}

}  // namespace

std::string render_history_json(const HistorySummary& s) {
    JsonWriter j;
    j.begin_object();
    j.key("log").value(s.log_path);
    j.key("since");
    if (s.since.empty())
        j.null();
    else
        j.value(s.since);
    j.key("by").value(period_name(s.by));
    j.key("simulated_left_out").value(s.simulated_left_out);
    j.key("attempts").value(s.attempts);
    j.key("totals").begin_array();
    for (const HistoryLine& l : s.totals) json_line(j, l, false);
    j.end_array();
    j.key("over_time").begin_array();
    for (const HistoryLine& l : s.over_time) json_line(j, l, true);
    j.end_array();
    j.end_object();
    return j.str() + "\n";
}

std::string render_history_csv(const HistorySummary& s) {
    std::string out =
        "period,kind,key,name,attempts,locked_share,time_to_lock_s,mean_dev_cents,spread_cents,in_tolerance_share,"
        "threshold_cents,"
        "threshold_lo_cents,threshold_hi_cents,estimate,correct_share,voices\n";
    auto num = [&out](double v, int decimals) {
        out += ',';
        if (std::isfinite(v)) out += pitch::format_trimmed(v, decimals);
    };
    for (const auto* lines : {&s.totals, &s.over_time}) {
        for (const HistoryLine& l : *lines) {
            out += csv_field(l.period) + ',' + std::string(kind_name(l.kind)) + ',' + csv_field(l.key) + ',' +
                   csv_field(l.name) + ',' + std::to_string(l.attempts);
            num(l.locked_share, 4);
            num(l.time_to_lock_s, 4);
            num(l.mean_dev_cents, 3);
            num(l.spread_cents, 3);
            num(l.in_tolerance_share, 4);
            num(l.threshold_cents, 3);
            num(l.threshold_lo_cents, 3);
            num(l.threshold_hi_cents, 3);
            out += ',' + l.estimate;
            num(l.correct_share, 4);
            out += ',';
            if (l.kind == AttemptKind::hold) out += std::to_string(l.voices);
            out += '\n';
        }
    }
    return out;
}

}  // namespace beatless::ui
