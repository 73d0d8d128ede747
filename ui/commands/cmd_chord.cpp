// beatless chord CHORD --root NOTE|HZ [--a4 HZ] [--format text|json|csv]
//
// Prints the chord chart of a just chord: per voice its ratio above the
// chord root, frequency, nearest note and cents from equal temperament (the
// bend from the usual fingering), and for every two voices the partials
// that meet and how fast they beat for each cent one of them is off. CHORD
// is a chord text (4:5:6:7, "1/1 5/4 3/2"), a built-in chord name
// (harmonic-seventh) or a path to a chord file.
#include "pitch/base/error.h"
#include "pitch/base/text.h"
#include "pitch/theory/chord.h"
#include "pitch/theory/notes.h"
#include "pitch/theory/spelling.h"
#include "ui/commands/commands.h"
#include "ui/session/chord_files.h"
#include "ui/session/json.h"
#include "ui/session/target_files.h"

#include <cctype>
#include <cstdio>
#include <memory>
#include <optional>

namespace beatless::ui {

namespace {

struct ChordOptions {
    std::vector<std::string> chord;
    std::string root;
    double a4_hz = pitch::kDefaultA4Hz;
    Format format = Format::text;
};

int run_chord(const ChordOptions& o) {
    pitch::check_a4(o.a4_hz);
    const ChordFile file = chord_from_argument(join_args(o.chord));
    const double root_hz = pitch::parse_root(o.root, o.a4_hz);
    // A root given as a note spells the voices from it (Bb, not A#).
    std::optional<pitch::Tonic> tonic;
    const std::string_view rt = pitch::trim(o.root);
    if (!rt.empty() && std::isalpha(static_cast<unsigned char>(rt[0]))) tonic = pitch::parse_tonic(rt);

    const pitch::ChartConfig config{o.a4_hz, 16};
    const pitch::ChordChart chart = pitch::chord_chart(file.chord, root_hz, config);
    for (std::size_t i = 0; i < chart.voices.size(); ++i) {
        const double f = chart.voices[i].freq_hz;
        if (f > 20000.0 || f < 1.0)
            throw Error("chord " + pitch::quote(file.text) + " on " + o.root + ": voice " + std::to_string(i + 1) +
                        " would sound at " + pitch::format_trimmed(f, f < 1.0 ? 9 : 1) + " Hz, " +
                        (f < 1.0 ? "below 1 Hz" : "above 20 kHz"));
    }
    std::vector<std::string> names;
    if (tonic) {
        std::vector<int> midi;
        for (const auto& v : chart.voices) midi.push_back(v.note.midi);
        names = pitch::spell_chord(*tonic, midi);
    } else {
        for (const auto& v : chart.voices) names.push_back(v.note.name);
    }
    const auto& iv_names = interval_names();

    if (o.format == Format::json) {
        JsonWriter j;
        j.begin_object();
        j.key("chord").value(file.chord.terms_text());
        j.key("title");
        if (file.title.empty())
            j.null();
        else
            j.value(file.title);
        j.key("root_hz").value(root_hz, 3).key("a4_hz").value(o.a4_hz, 3);
        j.key("fundamental_hz").value(chart.fundamental_hz, 3);
        j.key("voices").begin_array();
        for (std::size_t i = 0; i < chart.voices.size(); ++i) {
            const auto& v = chart.voices[i];
            j.begin_object().key("voice").value(static_cast<int>(i + 1));
            if (!file.voice_names.empty()) j.key("part").value(file.voice_names[i]);
            j.key("ratio").value(v.ratio.str()).key("term").value(v.term);
            j.key("freq_hz").value(v.freq_hz, 3).key("note").value(names[i]);
            j.key("cents_from_root").value(v.cents_from_root, 3).key("et_offset_cents").value(v.note.offset_cents, 3);
            j.key("beats").begin_array();
            for (const auto& b : chart.beats) {
                if (b.voice_a != i && b.voice_b != i) continue;
                const bool lower = b.voice_a == i;
                j.begin_object().key("with_voice").value(static_cast<int>((lower ? b.voice_b : b.voice_a) + 1));
                if (b.heard.found) {
                    j.key("partial").value(lower ? b.heard.partial_a : b.heard.partial_b);
                    j.key("other_partial").value(lower ? b.heard.partial_b : b.heard.partial_a);
                } else {
                    j.key("partial").null().key("other_partial").null();
                }
                j.key("at_hz").value(b.heard.meet_hz, 3).key("beat_hz_per_cent").value(b.heard_hz_per_cent, 4);
                j.key("in_tune_beat_hz").value(b.heard.beat_at_target_hz, 3);
                j.end_object();
            }
            j.end_array().end_object();
        }
        j.end_array();
        j.key("pairs").begin_array();
        for (const auto& b : chart.beats) {
            j.begin_object();
            j.key("voices")
                .begin_array()
                .value(static_cast<int>(b.voice_a + 1))
                .value(static_cast<int>(b.voice_b + 1))
                .end_array();
            j.key("interval").value(b.interval.str());
            // partials, at_hz, beat_hz_per_cent: the audible pair; own_partials: the interval's own pair (a detail).
            if (b.heard.found)
                j.key("partials").begin_array().value(b.heard.partial_a).value(b.heard.partial_b).end_array();
            else
                j.key("partials").null();
            j.key("at_hz").value(b.heard.meet_hz, 3).key("beat_hz_per_cent").value(b.heard_hz_per_cent, 4);
            j.key("in_tune_beat_hz").value(b.heard.beat_at_target_hz, 3);
            j.key("own_partials").begin_array().value(b.lowest.partial_a).value(b.lowest.partial_b).end_array();
            j.key("coinciding").begin_array();
            for (const auto& p : b.coinciding)
                j.begin_object()
                    .key("partials")
                    .begin_array()
                    .value(p.partial_a)
                    .value(p.partial_b)
                    .end_array()
                    .key("at_hz")
                    .value(p.freq_a_hz, 3)
                    .key("beat_hz_per_cent")
                    .value(pitch::beat_hz_per_cent(p), 4)
                    .end_object();
            j.end_array().end_object();
        }
        j.end_array().end_object();
        std::printf("%s\n", j.str().c_str());
        return 0;
    }

    if (o.format == Format::csv) {
        std::printf("voice,ratio,term,freq_hz,note,cents_from_root,et_offset_cents\n");
        for (std::size_t i = 0; i < chart.voices.size(); ++i) {
            const auto& v = chart.voices[i];
            std::printf("%zu,%s,%lld,%.3f,%s,%.3f,%.3f\n", i + 1, v.ratio.str().c_str(), static_cast<long long>(v.term),
                        v.freq_hz, names[i].c_str(), v.cents_from_root, v.note.offset_cents);
        }
        return 0;
    }

    // Text: a chart a player can read at the stand.
    const std::string root_name = tonic ? std::string(rt) : pitch::format_trimmed(root_hz, 3) + " Hz";
    std::printf("%s%s%s on %s", file.title.empty() ? "Chord " : file.title.c_str(), file.title.empty() ? "" : "  ",
                file.chord.terms_text().c_str(), root_name.c_str());
    if (tonic) std::printf(" = %.3f Hz", root_hz);
    std::printf("   (A4 = %s Hz)\n", pitch::format_trimmed(o.a4_hz, 3).c_str());
    if (!file.about.empty()) std::printf("%s\n", file.about.c_str());
    std::string terms;
    for (std::size_t i = 0; i < chart.voices.size(); ++i)
        terms += (i == 0 ? "" : i + 1 == chart.voices.size() ? " and " : ", ") + std::to_string(chart.voices[i].term);
    const auto fund = pitch::spell_hz_above_root(o.root, chart.fundamental_hz, o.a4_hz);
    std::printf("The voices are harmonics %s of one fundamental, %.3f Hz (near %s).\n\n", terms.c_str(),
                chart.fundamental_hz, fund.name.c_str());

    const bool parts = !file.voice_names.empty();
    std::size_t part_w = 4;
    for (const auto& n : file.voice_names) part_w = std::max(part_w, n.size());
    std::printf("  voice  %s%-9s %-5s %10s  %10s  %s\n",
                parts ? (std::string("part") + std::string(part_w - 2, ' ')).c_str() : "", "ratio", "note", "Hz",
                "above root", "from equal temperament");
    for (std::size_t i = 0; i < chart.voices.size(); ++i) {
        const auto& v = chart.voices[i];
        std::string part;
        if (parts) part = file.voice_names[i] + std::string(part_w - file.voice_names[i].size() + 2, ' ');
        std::printf("  %5zu  %s%-9s %-5s %10.3f  %8.1f c  %+8.1f c\n", i + 1, part.c_str(), v.ratio.str().c_str(),
                    names[i].c_str(), v.freq_hz, v.cents_from_root, v.note.offset_cents);
    }
    std::printf(
        "\n  \"from equal temperament\": how far above (+) or below (-) the equal-tempered note each voice\n"
        "  sits, the amount to bend from the usual fingering or slide position.\n\n");

    std::printf("Partials that beat when a voice is off (the beat rate grows by about this much per cent):\n");
    std::printf("  %-13s %-9s %-30s %10s  %s\n", "voices", "interval", "partials that meet", "at Hz", "beats per cent");
    bool fallback = false;
    for (const auto& b : chart.beats) {
        const std::string who = names[b.voice_a] + " + " + names[b.voice_b];
        const pitch::Interval iv = pitch::Interval::of(b.interval);
        const std::string* nm = iv_names.find(iv);
        if (!b.heard.found) {
            std::printf("  %-13s %-9s %-30s %10s  %8s%s%s\n", who.c_str(), b.interval.str().c_str(),
                        "none below the limit", "-", "-", nm ? "   " : "", nm ? nm->c_str() : "");
            continue;
        }
        const std::string meet = ordinal(b.heard.partial_a) + " of " + names[b.voice_a] + " = " +
                                 ordinal(b.heard.partial_b) + " of " + names[b.voice_b];
        std::string note;
        if (!b.heard.own) {
            char buf[64];
            std::snprintf(buf, sizeof buf, " (in tune: %.2f Hz)", b.heard.beat_at_target_hz);
            note = buf;
            fallback = true;
        }
        std::printf("  %-13s %-9s %-30s %10.2f  %5.2f Hz%s%s%s\n", who.c_str(), b.interval.str().c_str(), meet.c_str(),
                    b.heard.meet_hz, b.heard_hz_per_cent, note.c_str(), nm ? "   " : "", nm ? nm->c_str() : "");
    }
    std::printf("\n  Higher pairs (twice, three times the partial numbers) beat twice, three times as fast.\n");
    if (fallback)
        std::printf(
            "  (in tune: ...): the interval's own partials lie above the %dth or above %.0f Hz; a simpler ratio's "
            "pair\n"
            "  beats at that rate even when the chord is just.\n",
            config.audible.partials_b, config.audible.max_freq_hz);
    return 0;
}

}  // namespace

void register_chord(CLI::App& app, Runner& run) {
    auto o = std::make_shared<ChordOptions>();
    CLI::App* sub = app.add_subcommand(
        "chord", "Chord chart of a just chord: per voice cents from equal temperament and beating partials");
    sub->add_option(
           "CHORD", o->chord,
           "A chord: 4:5:6:7, \"1/1 5/4 3/2\", a built-in name (" +
               [] {
                   std::string s;
                   for (const auto& n : builtin_names("chord")) s += (s.empty() ? "" : ", ") + n;
                   return s;
               }() +
               ") or a .toml file")
        ->required();
    sub->add_option("--root", o->root, "Chord root as a note (C3) or in Hz (130.8)")->required();
    add_a4_option(*sub, o->a4_hz);
    add_format_option(*sub, o->format, true);
    sub->callback([o, &run] { run = [o] { return run_chord(*o); }; });
}

}  // namespace beatless::ui
