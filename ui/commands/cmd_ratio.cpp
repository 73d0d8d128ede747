// beatless ratio RATIO... [--root NOTE|HZ] [--a4 HZ] [--format text|json]
//
// Prints the facts of each interval (cents, prime and odd limit, Tenney
// height, nearest equal-tempered step, name of the trade); with a root, the
// two frequencies, the audible pair (pitch/theory/beats.h, audible_pair: the
// partials a listener hears beat over a drone of --timbre) and its beat
// rates at 0, ±2, ±5 and ±10 cents of mistuning; the interval's own
// coinciding pair appears as a labelled detail where it differs. A chord
// such as 4:5:6:7 stands for each of its upper notes against the lowest; a
// target set or chord file by name or path stands for each of its targets.
#include "audio/timbre.h"
#include "pitch/base/error.h"
#include "pitch/base/text.h"
#include "pitch/theory/beats.h"
#include "pitch/theory/interval.h"
#include "pitch/theory/notes.h"
#include "pitch/theory/spelling.h"
#include "ui/commands/commands.h"
#include "ui/session/json.h"
#include "ui/session/target_files.h"

#include <cmath>
#include <cstdio>
#include <memory>
#include <optional>

namespace beatless::ui {

namespace {

struct RatioOptions {
    std::vector<std::string> ratios;
    std::string root;
    double a4_hz = pitch::kDefaultA4Hz;
    std::string timbre = "round";
    Format format = Format::text;
};

constexpr double kMistunings[] = {-10, -5, -2, 0, 2, 5, 10};

struct Entry {
    pitch::Interval interval;
    std::string given;  // what the user typed (a chord expands to several entries)
};

// A built-in target set or chord ("tritones", "harmonic-cluster") or a .toml path.
bool names_a_set(const std::string& a) {
    if (a.ends_with(".toml")) return true;  // a ratio such as 7/5 holds a '/' too
    for (const char* kind : {"targets", "chord"}) {
        const auto names = builtin_names(kind);
        if (std::find(names.begin(), names.end(), a) != names.end()) return true;
    }
    return false;
}

std::vector<Entry> expand(const std::vector<std::string>& args) {
    std::vector<Entry> out;
    for (const auto& a : args) {
        if (std::count(a.begin(), a.end(), ':') >= 2) {
            const auto terms = pitch::parse_chord_terms(a);
            for (std::size_t i = 1; i < terms.size(); ++i)
                out.push_back({pitch::Interval::of(pitch::Ratio::make(terms[i], terms[0])), a});
        } else if (names_a_set(a)) {
            for (const auto& t : load_target_set(a).targets) out.push_back({t.interval, a});
        } else {
            out.push_back({pitch::parse_interval(a), a});
        }
    }
    return out;
}

// The interval's own ratio, when it is one.
std::optional<pitch::Ratio> own_ratio(const pitch::Interval& iv) {
    if (iv.is_ratio()) return iv.ratio();
    return std::nullopt;
}

// The audible pair with the upper tone dev_cents off the interval.
pitch::AudiblePair heard_at(double root_hz, const pitch::Interval& iv, double dev_cents,
                            const pitch::AudibleRange& range) {
    const double upper = root_hz * iv.value() * std::exp2(dev_cents / 1200.0);
    return pitch::audible_pair(root_hz, upper, iv.cents(), own_ratio(iv), range);
}

int run_ratio(const RatioOptions& o) {
    pitch::check_a4(o.a4_hz);
    const std::vector<Entry> entries = expand(o.ratios);
    std::optional<double> root_hz;
    if (!o.root.empty()) root_hz = pitch::parse_root(o.root, o.a4_hz);
    const auto& names = interval_names();
    pitch::AudibleRange range;
    range.partials_a = audio::timbre_highest_partial(audio::parse_timbre(o.timbre));

    if (o.format == Format::json) {
        JsonWriter j;
        j.begin_object();
        if (root_hz) j.key("root_hz").value(*root_hz, 3).key("a4_hz").value(o.a4_hz, 3);
        j.key("intervals").begin_array();
        for (const auto& e : entries) {
            const auto f = pitch::interval_facts(e.interval, names);
            j.begin_object();
            j.key("ratio").value(f.text).key("cents").value(f.cents, 3);
            j.key("prime_limit").value(f.prime_limit).key("odd_limit").value(f.odd_limit);
            j.key("tenney_height");
            if (f.tenney_height)
                j.value(*f.tenney_height, 3);
            else
                j.null();
            j.key("et_step").value(f.et.step).key("et_offset_cents").value(f.et.offset_cents, 3);
            j.key("name");
            if (f.name.empty())
                j.null();
            else
                j.value(f.name);
            if (root_hz) {
                const double upper = *root_hz * e.interval.value();
                const pitch::AudiblePair a = heard_at(*root_hz, e.interval, 0.0, range);
                j.key("root_hz").value(*root_hz, 3).key("upper_hz").value(upper, 3).key("timbre").value(o.timbre);
                j.key("audible_partials");
                if (a.found) {
                    j.begin_object().key("root").value(a.partial_a).key("upper").value(a.partial_b);
                    j.key("at_hz")
                        .value(a.meet_hz, 3)
                        .key("own")
                        .value(a.own)
                        .key("in_tune_beat_hz")
                        .value(a.beat_at_target_hz, 3)
                        .end_object();
                } else {
                    j.null();
                }
                j.key("own_partials");
                if (e.interval.is_ratio())
                    j.begin_object()
                        .key("root")
                        .value(e.interval.ratio().num)
                        .key("upper")
                        .value(e.interval.ratio().den)
                        .end_object();
                else
                    j.null();
                j.key("beats").begin_array();
                for (double d : kMistunings)
                    j.begin_object()
                        .key("dev_cents")
                        .value(d, 1)
                        .key("beat_hz")
                        .value(heard_at(*root_hz, e.interval, d, range).beat_hz, 3)
                        .end_object();
                j.end_array();
            }
            j.end_object();
        }
        j.end_array().end_object();
        std::printf("%s\n", j.str().c_str());
        return 0;
    }

    bool first = true;
    for (const auto& e : entries) {
        const auto f = pitch::interval_facts(e.interval, names);
        if (!first) std::printf("\n");
        first = false;
        std::printf("%s%s%s\n", f.text.c_str(), f.name.empty() ? "" : "  ", f.name.c_str());
        if (f.prime_limit) {
            std::printf("  %.3f cents · prime limit %d · odd limit %lld · Tenney height %.3f\n", f.cents,
                        *f.prime_limit, static_cast<long long>(*f.odd_limit), *f.tenney_height);
        } else {
            std::printf("  %.3f cents · not a ratio (no prime limit or Tenney height)\n", f.cents);
        }
        std::printf("  nearest 12-TET step: %s (%d cents), %+.3f cents from it\n", f.et_name.c_str(), 100 * f.et.step,
                    f.et.offset_cents);
        if (!root_hz) continue;
        const double upper = *root_hz * e.interval.value();
        // Named against the root as typed: over Bb3 the fifth is F4, 7/4 over D3 is C4.
        const auto rn = pitch::spell_hz_above_root(o.root, *root_hz, o.a4_hz);
        const auto un = pitch::spell_hz_above_root(o.root, upper, o.a4_hz);
        std::printf("  root %.3f Hz (%s %+.1f c) · upper tone %.3f Hz (%s %+.1f c)\n", *root_hz, rn.name.c_str(),
                    rn.offset_cents, upper, un.name.c_str(), un.offset_cents);
        const pitch::AudiblePair a = heard_at(*root_hz, e.interval, 0.0, range);
        if (!a.found) {
            std::printf(
                "  partials that beat: none below %.0f Hz in a %s drone and the upper tone (no beat to listen for)\n",
                range.max_freq_hz, o.timbre.c_str());
            continue;
        }
        const pitch::Ratio heard_ratio = pitch::Ratio::make(a.partial_a, a.partial_b);
        std::printf("  partials that beat: %s of the root (%.3f Hz) with %s of the upper tone (%.3f Hz)%s\n",
                    ordinal(a.partial_a).c_str(), a.meet_hz, ordinal(a.partial_b).c_str(), a.partial_b * upper,
                    a.own ? "" : (", as for " + heard_ratio.str()).c_str());
        if (!a.own) {
            std::printf("  in tune they beat %.2f Hz", a.beat_at_target_hz);
            if (e.interval.is_ratio()) {
                const pitch::Ratio& own = e.interval.ratio();
                const bool too_high = static_cast<double>(own.num) * *root_hz > range.max_freq_hz;
                std::printf(" (detail: its own coinciding pair %s:%s is %s)", std::to_string(own.num).c_str(),
                            std::to_string(own.den).c_str(),
                            too_high ? ("above " + pitch::format_trimmed(range.max_freq_hz, 0) + " Hz").c_str()
                                     : ("not sounded by a " + o.timbre + " drone").c_str());
            }
            std::printf("\n");
        }
        std::printf("  mistuning (cents) ");
        for (double d : kMistunings)
            std::printf("%8s", (d > 0 ? "+" + pitch::format_trimmed(d, 0) : pitch::format_trimmed(d, 0)).c_str());
        std::printf("\n  beat rate (Hz)    ");
        for (double d : kMistunings) std::printf("%8.2f", heard_at(*root_hz, e.interval, d, range).beat_hz);
        std::printf("\n");
    }
    return 0;
}

}  // namespace

void register_ratio(CLI::App& app, Runner& run) {
    auto o = std::make_shared<RatioOptions>();
    CLI::App* sub =
        app.add_subcommand("ratio", "Facts of intervals: cents, limits, Tenney height, beat rates over a root");
    sub->add_option(
           "RATIO", o->ratios,
           "Intervals: 7/5, 7:5, 3/2*5/4, 600c, a chord 4:5:6:7, or a target set or chord by name (tritones) or path")
        ->required();
    sub->add_option("--root", o->root, "Root as a note (A3) or in Hz (220): adds frequencies and beat rates");
    add_a4_option(*sub, o->a4_hz);
    sub->add_option("--timbre", o->timbre,
                    "Drone timbre whose partials can beat: pure, soft, round, bright, hollow (default round)");
    add_format_option(*sub, o->format, false);
    sub->callback([o, &run] { run = [o] { return run_ratio(*o); }; });
}

}  // namespace beatless::ui
