// beatless drift PROGRESSION [--key NOTE] [--a4 HZ] [--rule R] [--format F] [--plan]
//
// Tunes a chord progression (Roman numerals in a major or minor key, or
// explicit chords ROOT:TERMS) under two rules, a fixed root and common tones
// held, and says how far the pitch drifts by the end and which chord change
// causes it. --plan prints the director's plan: every voice's cents from
// equal temperament in every chord, one row per chord, ready to print.
#include "pitch/base/error.h"
#include "pitch/base/text.h"
#include "pitch/theory/notes.h"
#include "pitch/theory/progression.h"
#include "pitch/theory/spelling.h"
#include "ui/commands/commands.h"
#include "ui/session/json.h"
#include "ui/session/target_files.h"

#include <cmath>
#include <cstdio>
#include <map>
#include <memory>

namespace beatless::ui {

namespace {

enum class RuleChoice { both, fixed_root, common_tones };

struct DriftOptions {
    std::vector<std::string> progression;
    std::string key = "C4";
    double a4_hz = pitch::kDefaultA4Hz;
    Format format = Format::text;
    RuleChoice rule = RuleChoice::both;
    bool plan = false;
};

struct Context {
    pitch::Key key;
    int tonic_midi = 60;
    pitch::Progression progression;
    std::vector<pitch::ProgressionTuning> tunings;
    std::string text;
};

std::string note_of(const Context& c, const pitch::TunedVoice& v, bool with_octave) {
    const int midi = c.tonic_midi + v.step;
    return with_octave ? pitch::spell_midi(c.key.tonic, midi) : pitch::spell_pitch_class(c.key.tonic, v.step);
}

double freq_of(const Context& c, const pitch::TunedVoice& v) { return c.key.tonic_hz * std::exp2(v.cents / 1200.0); }

std::string ratio_text(const std::optional<pitch::Ratio>& r) { return r ? r->str() : "(too large)"; }

// "80/81, a syntonic comma flat" or the cents alone when the comma has no name.
std::string drift_words(const pitch::ProgressionTuning& t) {
    const double d = t.drift_cents;
    if (d == 0.0) return "none (0.000 cents)";
    std::string s = pitch::format_trimmed(d, 3) + " cents";
    if (t.drift) {
        s += " (" + t.drift->str();
        const pitch::Ratio up = d < 0 ? pitch::invert(*t.drift) : *t.drift;
        const std::string* name = interval_names().find(pitch::Interval::of(up));
        if (name) s += ", a " + *name + (d < 0 ? " flat" : " sharp");
        s += ")";
    }
    return s;
}

std::string change_name(const Context& c, std::size_t k) {
    return c.progression.chords[k - 1].symbol + " -> " + c.progression.chords[k].symbol;
}

std::string common_words(const Context& c, const pitch::TunedChord& tc) {
    std::string held, moved;
    for (const auto& ct : tc.common) {
        const std::string n = note_of(c, tc.voices[ct.voice], false);
        if (ct.held)
            held += (held.empty() ? "" : " ") + n;
        else
            moved += (moved.empty() ? "" : ", ") + n + " moves " + (ct.motion_cents > 0 ? "+" : "") +
                     pitch::format_trimmed(ct.motion_cents, 3);
    }
    std::string s;
    if (!held.empty()) s = held + " held";
    if (!moved.empty()) s += (s.empty() ? "" : "; ") + moved;
    if (tc.common.empty()) s = "no common tone";
    return s;
}

const char* rule_title(pitch::DriftRule r) {
    return r == pitch::DriftRule::fixed_root
               ? "Fixed root: every chord's root stays at its ratio from the tonic"
               : "Common tones held: each chord keeps the pitch it shares with the chord before";
}

void print_text(const Context& c, double a4_hz) {
    std::printf("%s   in %s %s   (tonic %s = %.3f Hz, A4 = %s Hz)\n", c.text.c_str(), c.key.tonic.name().c_str(),
                pitch::mode_name(c.progression.mode), pitch::spell_midi(c.key.tonic, c.tonic_midi).c_str(),
                c.key.tonic_hz, pitch::format_trimmed(a4_hz, 3).c_str());
    std::size_t sym_w = 5;
    for (const auto& pc : c.progression.chords) sym_w = std::max(sym_w, pc.symbol.size());
    for (const auto& t : c.tunings) {
        std::printf("\n%s\n", rule_title(t.rule));
        std::printf("  %3s  %-*s  %-24s %10s   %s\n", "#", static_cast<int>(sym_w), "chord", "root (fixed -> placed)",
                    "shift (c)", "common tones with the chord before");
        for (std::size_t k = 0; k < t.chords.size(); ++k) {
            const auto& tc = t.chords[k];
            const auto& pc = c.progression.chords[k];
            std::string root = pc.root.str();
            if (tc.shift_cents != 0.0) {
                const auto placed = tc.shift ? std::optional<pitch::Ratio>(*tc.shift * pc.root) : std::nullopt;
                root += " -> " + ratio_text(placed);
            }
            const std::string common = k == 0 ? std::string() : "   " + common_words(c, tc);
            std::printf("  %3zu  %-*s  %-24s %10.3f%s\n", k + 1, static_cast<int>(sym_w), pc.symbol.c_str(),
                        root.c_str(), tc.shift_cents, common.c_str());
        }
        std::printf("  drift by the end: %s\n", drift_words(t).c_str());
        if (t.rule == pitch::DriftRule::common_tones) {
            for (const std::size_t k : t.causes)
                std::printf("  caused by %s (chord %zu): the chord moves %+.3f cents to hold its common tone\n",
                            change_name(c, k).c_str(), k + 1, t.chords[k].step_cents);
            if (t.causes.empty()) std::printf("  every change holds its common tones without moving the pitch\n");
        } else {
            bool any = false;
            for (std::size_t k = 1; k < t.chords.size(); ++k)
                for (const auto& ct : t.chords[k].common)
                    if (!ct.held) {
                        std::printf("  instead, at %s the common tone %s moves %+.3f cents\n",
                                    change_name(c, k).c_str(), note_of(c, t.chords[k].voices[ct.voice], false).c_str(),
                                    ct.motion_cents);
                        any = true;
                    }
            if (!any) std::printf("  and every common tone keeps its pitch\n");
        }
    }
}

void print_plan(const Context& c, double a4_hz) {
    std::printf("Director's plan: %s in %s %s (tonic %s, A4 = %s Hz)\n", c.text.c_str(), c.key.tonic.name().c_str(),
                pitch::mode_name(c.progression.mode), pitch::spell_midi(c.key.tonic, c.tonic_midi).c_str(),
                pitch::format_trimmed(a4_hz, 3).c_str());
    std::printf("Cents from equal temperament for each voice; voice 1 is the chord's root, then upward.\n");
    std::size_t voices = 0;
    std::size_t sym_w = 5;
    for (const auto& pc : c.progression.chords) {
        voices = std::max(voices, pc.chord.size());
        sym_w = std::max(sym_w, pc.symbol.size());
    }
    for (const auto& t : c.tunings) {
        std::printf("\n%s. Drift by the end: %s\n",
                    t.rule == pitch::DriftRule::fixed_root ? "Fixed root" : "Common tones held",
                    drift_words(t).c_str());
        std::printf("  %3s  %-*s", "#", static_cast<int>(sym_w), "chord");
        for (std::size_t v = 0; v < voices; ++v) std::printf("  voice %-3zu", v + 1);
        std::printf("\n");
        bool marked = false;
        for (std::size_t k = 0; k < t.chords.size(); ++k) {
            const auto& tc = t.chords[k];
            std::printf("  %3zu  %-*s", k + 1, static_cast<int>(sym_w), c.progression.chords[k].symbol.c_str());
            for (std::size_t v = 0; v < tc.voices.size(); ++v) {
                bool moves = false;
                for (const auto& ct : tc.common) moves = moves || (ct.voice == v && !ct.held);
                marked = marked || moves;
                std::printf("  %-3s%+5.1f%s", note_of(c, tc.voices[v], false).c_str(), tc.voices[v].et_offset_cents,
                            moves ? "*" : " ");
            }
            std::printf("\n");
        }
        if (marked) std::printf("  * a common tone that changes pitch from the chord before\n");
    }
}

void print_json(const Context& c, double a4_hz) {
    JsonWriter j;
    j.begin_object();
    j.key("progression").value(c.text);
    j.key("key").value(c.key.tonic.name()).key("mode").value(pitch::mode_name(c.progression.mode));
    j.key("tonic_hz").value(c.key.tonic_hz, 3).key("a4_hz").value(a4_hz, 3);
    j.key("rules").begin_array();
    for (const auto& t : c.tunings) {
        j.begin_object().key("rule").value(pitch::rule_name(t.rule));
        j.key("drift_cents").value(t.drift_cents, 3).key("drift_ratio");
        if (t.drift)
            j.value(t.drift->str());
        else
            j.null();
        j.key("causes").begin_array();
        for (const std::size_t k : t.causes)
            j.begin_object()
                .key("chord")
                .value(static_cast<int>(k + 1))
                .key("change")
                .value(change_name(c, k))
                .key("step_cents")
                .value(t.chords[k].step_cents, 3)
                .end_object();
        j.end_array();
        j.key("chords").begin_array();
        for (std::size_t k = 0; k < t.chords.size(); ++k) {
            const auto& tc = t.chords[k];
            const auto& pc = c.progression.chords[k];
            j.begin_object().key("index").value(static_cast<int>(k + 1)).key("symbol").value(pc.symbol);
            j.key("root_ratio").value(pc.root.str()).key("terms").value(pc.chord.terms_text());
            j.key("shift_cents").value(tc.shift_cents, 3).key("shift_ratio");
            if (tc.shift)
                j.value(tc.shift->str());
            else
                j.null();
            j.key("step_cents").value(tc.step_cents, 3);
            j.key("voices").begin_array();
            for (std::size_t v = 0; v < tc.voices.size(); ++v) {
                const auto& tv = tc.voices[v];
                j.begin_object().key("voice").value(static_cast<int>(v + 1)).key("note").value(note_of(c, tv, true));
                j.key("ratio");
                if (tv.ratio)
                    j.value(tv.ratio->str());
                else
                    j.null();
                j.key("cents_from_tonic").value(tv.cents, 3).key("freq_hz").value(freq_of(c, tv), 3);
                j.key("et_offset_cents").value(tv.et_offset_cents, 3).end_object();
            }
            j.end_array();
            j.key("common_tones").begin_array();
            for (const auto& ct : tc.common)
                j.begin_object()
                    .key("note")
                    .value(note_of(c, tc.voices[ct.voice], false))
                    .key("voice")
                    .value(static_cast<int>(ct.voice + 1))
                    .key("previous_voice")
                    .value(static_cast<int>(ct.prev_voice + 1))
                    .key("held")
                    .value(ct.held)
                    .key("motion_cents")
                    .value(ct.motion_cents, 3)
                    .end_object();
            j.end_array().end_object();
        }
        j.end_array().end_object();
    }
    j.end_array().end_object();
    std::printf("%s\n", j.str().c_str());
}

void print_csv(const Context& c) {
    std::printf("rule,chord,symbol,voice,note,ratio,cents_from_tonic,freq_hz,et_offset_cents\n");
    for (const auto& t : c.tunings)
        for (std::size_t k = 0; k < t.chords.size(); ++k)
            for (std::size_t v = 0; v < t.chords[k].voices.size(); ++v) {
                const auto& tv = t.chords[k].voices[v];
                std::printf("%s,%zu,%s,%zu,%s,%s,%.3f,%.3f,%.3f\n", pitch::rule_name(t.rule), k + 1,
                            c.progression.chords[k].symbol.c_str(), v + 1, note_of(c, tv, true).c_str(),
                            tv.ratio ? tv.ratio->str().c_str() : "", tv.cents, freq_of(c, tv), tv.et_offset_cents);
            }
}

int run_drift(const DriftOptions& o) {
    pitch::check_a4(o.a4_hz);
    Context c;
    c.text = join_args(o.progression);
    c.key = pitch::parse_key(o.key, o.a4_hz);
    c.tonic_midi = static_cast<int>(std::lround(pitch::hz_to_midi(c.key.tonic_hz, o.a4_hz)));
    c.progression = pitch::parse_progression(c.text, c.key.mode);
    if (o.rule != RuleChoice::common_tones)
        c.tunings.push_back(pitch::tune_progression(c.progression, pitch::DriftRule::fixed_root));
    if (o.rule != RuleChoice::fixed_root)
        c.tunings.push_back(pitch::tune_progression(c.progression, pitch::DriftRule::common_tones));
    switch (o.format) {
        case Format::json: print_json(c, o.a4_hz); break;
        case Format::csv: print_csv(c); break;
        case Format::text:
            if (o.plan)
                print_plan(c, o.a4_hz);
            else
                print_text(c, o.a4_hz);
            break;
    }
    return 0;
}

}  // namespace

void register_drift(CLI::App& app, Runner& run) {
    auto o = std::make_shared<DriftOptions>();
    CLI::App* sub =
        app.add_subcommand("drift", "Comma drift of a chord progression under a fixed root and with common tones held");
    sub->add_option("PROGRESSION", o->progression,
                    "Roman numerals (\"I vi ii V7 I\", \"i iv V i\") or chords ROOT:TERMS (5/3:10:12:15)")
        ->required();
    sub->add_option("--key", o->key, "Tonic and mode: C, Eb3, \"A minor\", F#m (default C4, mode from the numerals)");
    add_a4_option(*sub, o->a4_hz);
    const std::map<std::string, RuleChoice> rules{
        {"both", RuleChoice::both}, {"fixed-root", RuleChoice::fixed_root}, {"common-tones", RuleChoice::common_tones}};
    sub->add_option("--rule", o->rule, "Which rule: both, fixed-root or common-tones (default both)")
        ->transform(CLI::CheckedTransformer(rules, CLI::ignore_case).description(""));
    sub->add_flag("--plan", o->plan,
                  "Print the director's plan: each voice's cents from equal temperament in every chord (text)");
    add_format_option(*sub, o->format, true);
    sub->callback([o, &run] { run = [o] { return run_drift(*o); }; });
}

}  // namespace beatless::ui
