#include "ui/session/drill_files.h"

#include "pitch/base/error.h"
#include "pitch/base/text.h"
#include "pitch/theory/notes.h"
#include "ui/session/json.h"
#include "ui/session/rng.h"
#include "ui/session/target_files.h"
#include "ui/session/toml_reader.h"

#include <algorithm>
#include <initializer_list>
#include <set>

namespace beatless::ui {

namespace {

// ---- Typed fields with ranges ----------------------------------------------

std::string range_text(double lo, double hi) {
    std::string s = "(";
    s += pitch::format_trimmed(lo, 4);
    s += " to ";
    s += pitch::format_trimmed(hi, 4);
    s += ")";
    return s;
}

double number_in(const TomlDoc& doc, const toml::table& t, std::string_view key, double fallback, double lo,
                 double hi) {
    const double v = optional_number(doc, t, key, fallback);
    if (!(v >= lo && v <= hi))
        throw Error(where(doc, t[key]) + "`" + std::string(key) + "`: " + pitch::format_trimmed(v, 4) +
                    " is out of range " + range_text(lo, hi));
    return v;
}

int int_in(const TomlDoc& doc, const toml::table& t, std::string_view key, int fallback, int lo, int hi) {
    const auto v = t[key];
    if (!v) return fallback;
    if (!v.is_integer())
        throw Error(where(doc, v) + "`" + std::string(key) + "`: must be a whole number, not " +
                    describe_type(*v.node()));
    const std::int64_t n = *v.value<std::int64_t>();
    if (n < lo || n > hi)
        throw Error(where(doc, v) + "`" + std::string(key) + "`: " + std::to_string(n) + " is out of range " +
                    range_text(lo, hi));
    return static_cast<int>(n);
}

bool optional_bool(const TomlDoc& doc, const toml::table& t, std::string_view key, bool fallback) {
    const auto v = t[key];
    if (!v) return fallback;
    if (!v.is_boolean())
        throw Error(where(doc, v) + "`" + std::string(key) + "`: must be true or false, not " +
                    describe_type(*v.node()));
    return *v.value<bool>();
}

template <class E>
E choice(const TomlDoc& doc, const toml::table& t, std::string_view key, E fallback,
         std::initializer_list<std::pair<const char*, E>> options) {
    const auto v = t[key];
    if (!v) return fallback;
    const std::string s = optional_string(doc, t, key);
    std::string known;
    for (const auto& [name, e] : options) {
        if (s == name) return e;
        known += (known.empty() ? "\"" : ", \"") + std::string(name) + "\"";
    }
    throw Error(where(doc, v) + "`" + std::string(key) + "`: " + pitch::quote(s) + " is not one of " + known);
}

const toml::table* sub_table(const TomlDoc& doc, const toml::table& t, std::string_view key) {
    const auto v = t[key];
    if (!v) return nullptr;
    if (!v.is_table())
        throw Error(where(doc, v) + "`" + std::string(key) + "`: must be a table [" + std::string(key) + "], not " +
                    describe_type(*v.node()));
    return v.as_table();
}

// ---- Sections --------------------------------------------------------------

DroneSettings parse_drone(const TomlDoc& doc, const toml::table* t) {
    DroneSettings d;
    if (!t) return d;
    check_keys(doc, *t, {"root", "level_dbfs", "partials", "fifth"}, "[drone]");
    if (const auto r = (*t)["root"]) {
        if (r.is_number())
            d.root_text = pitch::format_trimmed(*r.value<double>(), 6);
        else
            d.root_text = optional_string(doc, *t, "root");
        try {
            d.root_hz = pitch::parse_root(d.root_text);
        } catch (const Error& e) {
            throw Error(where(doc, r) + "`root`: " + e.what());
        }
    }
    d.level_dbfs = number_in(doc, *t, "level_dbfs", d.level_dbfs, -60.0, -6.0);
    d.partials = int_in(doc, *t, "partials", d.partials, 1, 32);
    d.fifth = optional_bool(doc, *t, "fifth", d.fifth);
    return d;
}

ui::StaircaseConfig parse_staircase(const TomlDoc& doc, const toml::table* t) {
    ui::StaircaseConfig c;
    if (!t) return c;
    check_keys(doc, *t,
               {"rule", "scale", "start_cents", "steps", "min_cents", "max_cents", "stop_reversals",
                "threshold_reversals", "max_trials", "floor_run"},
               "[staircase]");
    c.n_down = choice(doc, *t, "rule", 2, {{"2-down", 2}, {"3-down", 3}});
    c.scale =
        choice(doc, *t, "scale", c.scale, {{"geometric", ui::StepScale::geometric}, {"linear", ui::StepScale::linear}});
    c.start_level = number_in(doc, *t, "start_cents", c.start_level, 0.1, 1200.0);
    c.min_level = number_in(doc, *t, "min_cents", c.min_level, 0.01, 1200.0);
    c.max_level = number_in(doc, *t, "max_cents", c.max_level, 0.01, 2400.0);
    if (const auto s = (*t)["steps"]) {
        const toml::array* a = s.as_array();
        if (!a || a->empty()) throw Error(where(doc, s) + "`steps`: must be a list of numbers, e.g. [2.0, 1.4142]");
        c.steps.clear();
        for (const auto& e : *a) {
            if (!e.is_number()) throw Error(where(doc, e) + "`steps`: must hold numbers only, not " + describe_type(e));
            c.steps.push_back(*e.value<double>());
        }
    }
    c.stop_reversals = int_in(doc, *t, "stop_reversals", c.stop_reversals, 2, 100);
    c.threshold_reversals = int_in(doc, *t, "threshold_reversals", c.threshold_reversals, 2, 100);
    c.max_trials = int_in(doc, *t, "max_trials", c.max_trials, 1, 10000);
    c.floor_run = int_in(doc, *t, "floor_run", c.floor_run, 0, 1000);
    try {
        ui::check_staircase_config(c);
    } catch (const Error& e) {
        throw Error(where(doc, *t) + e.what());
    }
    return c;
}

std::vector<DrillTarget> parse_targets(const TomlDoc& doc, const toml::table& top, bool hold) {
    std::vector<DrillTarget> out;
    const auto set_name = top["target_set"];
    const auto list = top["target"];
    if (set_name && list)
        throw Error(where(doc, set_name) + "`target_set`: give either target_set or [[target]] entries, not both");
    if (set_name) {
        const std::string name = optional_string(doc, top, "target_set");
        try {
            for (auto& t : load_target_set(name).targets) out.push_back({std::move(t), NAN});
        } catch (const Error& e) {
            throw Error(where(doc, set_name) + "`target_set`: " + e.what());
        }
        return out;
    }
    if (!list)
        throw Error(doc.source +
                    ": `[[target]]`: required table missing: add [[target]] entries with interval = \"7/5\", or "
                    "target_set = \"tritones\"");
    for (const auto& e : require_array_of_tables(doc, top, "target")) {
        const toml::table& t = *e.as_table();
        if (hold)
            check_keys(doc, t, {"interval", "name", "hold_s"}, "[[target]]");
        else
            check_keys(doc, t, {"interval", "name"}, "[[target]] of an ear drill");
        DrillTarget d;
        const std::string text = require_string(doc, t, "interval");
        try {
            d.target.interval = pitch::parse_interval(text);
        } catch (const Error& err) {
            throw Error(where(doc, t["interval"]) + "`interval`: " + err.what());
        }
        d.target.name = optional_string(doc, t, "name");
        if (d.target.name.empty())
            if (const std::string* n = interval_names().find(d.target.interval)) d.target.name = *n;
        if (t["hold_s"]) d.hold_s = number_in(doc, t, "hold_s", 4.0, 0.5, 120.0);
        out.push_back(std::move(d));
    }
    return out;
}

std::string stem_of(std::string_view source) {
    std::string s(source);
    if (const auto slash = s.find_last_of('/'); slash != std::string::npos) s = s.substr(slash + 1);
    if (s.size() > 5 && s.substr(s.size() - 5) == ".toml") s.resize(s.size() - 5);
    return s;
}

Drill parse_doc(const TomlDoc& doc) {
    const toml::table& top = doc.table;
    Drill d;
    d.id = stem_of(doc.source);
    d.title = require_string(doc, top, "title");
    d.about = optional_string(doc, top, "about");
    if (!top["mode"]) throw Error(doc.source + ": `mode`: required key missing (\"hold\" or \"ear\")");
    d.mode = choice(doc, top, "mode", DrillMode::hold, {{"hold", DrillMode::hold}, {"ear", DrillMode::ear}});
    const bool hold = d.mode == DrillMode::hold;
    if (hold)
        check_keys(doc, top,
                   {"kind", "title", "about", "mode", "drone", "target", "target_set", "repetitions", "order", "hold_s",
                    "lead_in_s", "rest_s", "tolerance_cents", "dwell_s", "sound_target"},
                   "a hold drill");
    else
        check_keys(doc, top,
                   {"kind", "title", "about", "mode", "drone", "target", "target_set", "task", "tone_s", "staircase",
                    "rounds"},
                   "an ear drill");
    d.drone = parse_drone(doc, sub_table(doc, top, "drone"));
    d.targets = parse_targets(doc, top, hold);
    if (hold) {
        d.repetitions = int_in(doc, top, "repetitions", d.repetitions, 1, 50);
        d.order = choice(doc, top, "order", d.order,
                         {{"sequence", TargetOrder::sequence}, {"shuffle", TargetOrder::shuffle}});
        d.hold_s = number_in(doc, top, "hold_s", d.hold_s, 0.5, 120.0);
        d.lead_in_s = number_in(doc, top, "lead_in_s", d.lead_in_s, 0.0, 30.0);
        d.rest_s = number_in(doc, top, "rest_s", d.rest_s, 0.0, 30.0);
        d.tolerance_cents = number_in(doc, top, "tolerance_cents", d.tolerance_cents, 0.5, 100.0);
        d.dwell_s = number_in(doc, top, "dwell_s", d.dwell_s, 0.0, 10.0);
        d.sound_target = optional_bool(doc, top, "sound_target", d.sound_target);
        for (const DrillTarget& t : d.targets)
            if (d.dwell_s >= d.hold_of(t))
                throw Error(where(doc, top["dwell_s"]) + "`dwell_s`: " + pitch::format_trimmed(d.dwell_s, 3) +
                            " must be shorter than the hold (" + pitch::format_trimmed(d.hold_of(t), 3) + " s for " +
                            t.target.interval.str() + ")");
    } else {
        if (!top["task"]) throw Error(doc.source + ": `task`: required key missing (\"discriminate\" or \"identify\")");
        d.task = choice(doc, top, "task", d.task,
                        {{"discriminate", ui::EarTask::discriminate}, {"identify", ui::EarTask::identify}});
        d.tone_s = number_in(doc, top, "tone_s", d.tone_s, 0.3, 10.0);
        if (d.task == ui::EarTask::discriminate) {
            if (top["rounds"]) throw Error(where(doc, top["rounds"]) + "`rounds`: only for task = \"identify\"");
            if (d.targets.size() != 1)
                throw Error(where(doc, top["target"]) + "`[[target]]`: a discrimination drill mistunes one interval; " +
                            std::to_string(d.targets.size()) + " are given");
            d.staircase = parse_staircase(doc, sub_table(doc, top, "staircase"));
        } else {
            if (top["staircase"])
                throw Error(where(doc, top["staircase"]) + "`staircase`: only for task = \"discriminate\"");
            d.rounds = int_in(doc, top, "rounds", d.rounds, 1, 50);
        }
        try {
            ui::EarQuestioner check(d.task, d.target_cents(), d.rounds, 1);
        } catch (const Error& e) {
            throw Error(where(doc, top["target"]) + "`[[target]]`: " + e.what());
        }
    }
    return d;
}

}  // namespace

// ---- Drill -----------------------------------------------------------------

std::vector<DrillTarget> Drill::sequence(std::uint64_t seed) const {
    std::vector<DrillTarget> out;
    ui::Rng rng(seed);
    for (int round = 0; round < repetitions; ++round) {
        std::vector<DrillTarget> r = targets;
        if (order == TargetOrder::shuffle)
            for (std::size_t i = r.size(); i > 1; --i) std::swap(r[i - 1], r[rng.below(i)]);  // Fisher-Yates
        out.insert(out.end(), r.begin(), r.end());
    }
    return out;
}

ui::HoldScoreConfig Drill::score_config(const DrillTarget& t, double hold_start_s, double hop_s) const {
    ui::HoldScoreConfig c;
    c.tolerance_cents = tolerance_cents;
    c.dwell_s = dwell_s;
    c.hold_start_s = hold_start_s;
    c.hold_dur_s = hold_of(t);
    c.hop_s = hop_s;
    return c;
}

ui::FitConfig Drill::fit_config() const {
    ui::FitConfig c;
    c.threshold_p = std::pow(0.5, 1.0 / staircase.n_down);  // Levitt 1971: p^n_down = 1/2 (n_up = 1)
    c.min_cents = staircase.min_level;
    c.max_cents = staircase.max_level;
    return c;
}

std::vector<double> Drill::target_cents() const {
    std::vector<double> c;
    for (const DrillTarget& t : targets) c.push_back(t.target.interval.cents());
    return c;
}

std::string Drill::targets_text() const {
    std::string s;
    for (const DrillTarget& t : targets) {
        if (!s.empty()) s += ' ';
        s += t.target.interval.str();
    }
    return s;
}

Drill parse_drill(std::string_view text, std::string_view source_name) {
    return parse_doc(parse_toml(text, std::string(source_name), "drill"));
}

Drill load_drill(std::string_view name_or_path) { return parse_doc(load_toml(name_or_path, "drill")); }

std::string drill_settings_json(const Drill& d, int voices) {
    JsonWriter j;
    j.begin_object();
    j.key("drill").value(d.id);
    j.key("mode").value(d.mode == DrillMode::hold ? "hold" : "ear");
    if (voices == 2) j.key("voices").value(2);  // the interval between two voices was scored, not one voice
    j.key("drone").begin_object();
    j.key("root").value(d.drone.root_text).key("root_hz").value(d.drone.root_hz, 4);
    j.key("level_dbfs")
        .value(d.drone.level_dbfs, 2)
        .key("partials")
        .value(d.drone.partials)
        .key("fifth")
        .value(d.drone.fifth);
    j.end_object();
    if (d.mode == DrillMode::hold) {
        j.key("hold_s").value(d.hold_s, 3).key("lead_in_s").value(d.lead_in_s, 3).key("rest_s").value(d.rest_s, 3);
        j.key("tolerance_cents").value(d.tolerance_cents, 3).key("dwell_s").value(d.dwell_s, 3);
        j.key("repetitions")
            .value(d.repetitions)
            .key("order")
            .value(d.order == TargetOrder::shuffle ? "shuffle" : "sequence");
        j.key("sound_target").value(d.sound_target);
    } else {
        j.key("task")
            .value(d.task == ui::EarTask::discriminate ? "discriminate" : "identify")
            .key("tone_s")
            .value(d.tone_s, 3);
        if (d.task == ui::EarTask::identify) j.key("rounds").value(d.rounds);
    }
    if (d.mode == DrillMode::ear && d.task == ui::EarTask::discriminate) {
        const auto& s = d.staircase;
        const ui::FitConfig f = d.fit_config();
        j.key("staircase").begin_object();
        j.key("n_down").value(s.n_down).key("n_up").value(s.n_up);
        j.key("scale").value(s.scale == ui::StepScale::geometric ? "geometric" : "linear");
        j.key("start_cents").value(s.start_level, 4).key("steps").begin_array();
        for (double st : s.steps) j.value(st, 4);
        j.end_array();
        j.key("min_cents").value(s.min_level, 4).key("max_cents").value(s.max_level, 4);
        j.key("stop_reversals").value(s.stop_reversals).key("threshold_reversals").value(s.threshold_reversals);
        j.key("max_trials").value(s.max_trials).key("floor_run").value(s.floor_run);
        j.end_object();
        j.key("fit").begin_object();
        j.key("guess").value(f.guess, 4).key("lapse").value(f.lapse, 4).key("slope").value(f.slope, 4);
        j.key("threshold_p").value(f.threshold_p, 4).key("chi2_crit").value(f.chi2_crit, 4);
        j.end_object();
    }
    j.key("targets").value(d.targets_text());
    j.end_object();
    return j.str();
}

}  // namespace beatless::ui
