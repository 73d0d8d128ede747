// beatless analyze FILE [--root auto|NOTE|HZ] [--a4 HZ] [--targets SET] [--voices 1|2]
//                       [--format text|json|csv] [--report FILE.png] [--channel N]
//
// Note by note, how pure the intervals of a recorded take were. One voice
// (the default): the drone's root is found in the file or given, the voice's
// held notes are measured against it (vibrato centre, nearest target,
// deviation, spread, settle time, beat rate of the coinciding partials) and
// summarised per target. Two voices from one microphone: the held double
// stops, both f0s, the interval, its target and deviation, and the beat rate
// measured from the partials beside the rate the f0s predict. The passes are
// in ui/session/take_analysis.h; the printable page in ui/analysis_report.h.
//
// Each note is judged against the target meant (--expect, in order; see
// pitch/measure/intent.h), else the nearest, else flagged "between targets".
// A file with no steady drone (when the root is to be found) or with no
// sound gets a one-line message naming it and exit code 1; a take with
// sound but no held notes (noise, say) gives an empty result, a one-line
// hint (level, estimated SNR, what to try) and exit 0.
//
// Index: shared text helpers; One voice (JSON, CSV, text, report); Two
// voices (the same); The command (options, checks, progress, passes).
#include "pitch/base/error.h"
#include "pitch/base/text.h"
#include "pitch/theory/beats.h"
#include "pitch/theory/notes.h"
#include "pitch/theory/spelling.h"
#include "ui/commands/commands.h"
#include "ui/commands/progress.h"
#include "ui/screens/take_report.h"
#include "ui/session/json.h"
#include "ui/session/log_csv.h"
#include "ui/session/take_analysis.h"
#include "ui/session/take_export.h"
#include "ui/session/take_words.h"
#include "ui/session/target_files.h"
#include "ui/session/usage_error.h"

#include <unistd.h>

#include <cmath>
#include <cstdio>
#include <ctime>
#include <filesystem>
#include <memory>
#include <optional>

namespace beatless::ui {

namespace {

struct AnalyzeOptions {
    std::string file;
    std::string root = "auto";
    bool root_set = false;     // --root given on the command line
    bool targets_set = false;  // --targets given
    bool a4_set = false;       // --a4 given
    double a4_hz = pitch::kDefaultA4Hz;
    std::string targets = "7-limit";
    int voices = 1;
    Format format = Format::text;
    std::string report;
    std::optional<int> channel;  // 1-based; empty mixes all channels
    std::string lowest;          // --lowest: below the default floor (a semitone under the root, 41-55 Hz)
    std::string expect;          // --expect: the targets meant, in order ("7/5,10/7")
    double between_cents = pitch::IntentConfig{}.between_cents;  // --between
};

constexpr double kProgressAfterS = 5.0;  // files longer than this show a progress bar (on a terminal)

std::string target_name(const pitch::TargetSet& set, int index) { return target_name_of(set, index); }

// "7/5", "3/2 +1oct", or "-" for a note between targets.
std::string target_column(const pitch::TargetSet& set, int index, int octaves) {
    return index < 0 ? "-" : target_words_at(set, index, octaves, false);
}

std::string dev_column(double dev_cents) {
    if (!std::isfinite(dev_cents)) return "-";
    char buf[32];
    // What rounds to zero is "+0.0", never "-0.0" (the Review screen shows it as 0.0).
    std::snprintf(buf, sizeof buf, "%+.1f", std::fabs(dev_cents) < 0.05 ? 0.0 : dev_cents);
    return buf;
}

std::string base_name(const std::string& path) { return std::filesystem::path(path).filename().string(); }

std::string today_text() {
    const std::time_t now = std::time(nullptr);
    std::tm tm{};
    localtime_r(&now, &tm);
    char buf[32];
    std::strftime(buf, sizeof buf, "%Y-%m-%d %H:%M", &tm);
    return buf;
}

std::string root_words(const OneVoiceAnalysis& a, const std::string& root_typed, double a4_hz) {
    // A root given as a note keeps the user's spelling (Bb3, never A#3).
    pitch::NearestNote n = pitch::hz_to_note(a.root_hz, a4_hz);
    if (a.root_given) {
        const pitch::NoteAboveRoot typed = pitch::spell_hz_above_root(root_typed, a.root_hz, a4_hz);
        n.name = typed.name;
        n.offset_cents = typed.offset_cents;
    }
    char buf[96];
    const double off = std::fabs(n.offset_cents) < 0.05 ? 0.0 : n.offset_cents;  // no "-0.0"
    std::snprintf(buf, sizeof buf, "root %.3f Hz (%s %+.1f c)", a.root_hz, n.name.c_str(), off);
    std::string s = buf;
    if (!a.root_given) return s + ", found in the file: confidence " + pitch::format_trimmed(a.root.confidence, 2);
    s += ", as given";
    if (a.drone_hz > 0.0)
        s += "; drone in the file at " + pitch::format_trimmed(a.drone_hz, 3) + " Hz";
    else
        s += "; no steady drone in the file";
    return s;
}

void warn_clipping(const pitch::SignalFacts& f, const std::string& path) {
    if (f.clipped_samples == 0) return;
    std::fprintf(
        stderr,
        "beatless: warning: %s: %lld samples at full scale (clipped), the first at %s s; pitches there may be biased\n",
        path.c_str(), static_cast<long long>(f.clipped_samples), pitch::format_trimmed(f.first_clip_s, 3).c_str());
}

void check_report_path(const std::string& path) {
    if (path.empty()) return;
    const std::filesystem::path p(path);
    const std::filesystem::path dir = p.has_parent_path() ? p.parent_path() : std::filesystem::path(".");
    std::error_code ec;
    if (!std::filesystem::is_directory(dir, ec))
        throw Error(path + ": cannot be written (no directory " + dir.string() + ")");
    if (access(dir.c_str(), W_OK) != 0)
        throw Error(path + ": cannot be written (directory " + dir.string() + " is not writable)");
}

void print_summary_text(const pitch::TargetSet& set, const std::vector<pitch::TargetSummary>& rows, bool dyads) {
    if (rows.empty()) return;
    std::printf("\nPer target:\n");
    for (const auto& r : rows) {
        // Named as the lines above name the notes or intervals it sums, in the octave they were matched at.
        const std::string name = target_name_words_at(set, r.target_index, r.target_octaves, dyads);
        std::string line = summary_words(r, target_words_at(set, r.target_index, r.target_octaves, dyads), dyads);
        if (!name.empty()) line += " - " + name;
        std::printf("  %s\n", line.c_str());
    }
}

// ---------------------------------------------------------------------------
// [SECTION] One voice
// ---------------------------------------------------------------------------
// The voices the drone removal hid on the drone's partials, one line each.
void print_on_partials(const pitch::TargetSet& set, const std::vector<pitch::PartialVoice>& list, double root_hz,
                       bool intervals, bool gap) {
    if (list.empty()) return;
    if (gap) std::printf("\n");
    for (const pitch::PartialVoice& v : list) std::printf("%s\n", on_partial_words(v, set, root_hz, intervals).c_str());
}

// With JSON or CSV on stdout: on stderr, the voices hidden on the drone's partials, else the one-line hint.
void tell_nothing_found(const std::string& file, const pitch::TargetSet& set, const HeardLevels& heard,
                        const std::vector<pitch::PartialVoice>& hidden, double root_hz, bool intervals) {
    if (hidden.empty())
        std::fprintf(stderr, "beatless: %s: %s\n", file.c_str(),
                     nothing_found_words(heard.loudest_dbfs, heard.snr_db, intervals).c_str());
    for (const pitch::PartialVoice& v : hidden)
        std::fprintf(stderr, "beatless: %s: %s\n", file.c_str(), on_partial_words(v, set, root_hz, intervals).c_str());
}

void print_one_voice(const AnalyzeOptions& o, const pitch::TargetSet& set, const OneVoiceAnalysis& a) {
    const auto& notes = a.notes;
    if (o.format == Format::json) {
        std::printf("%s\n", one_voice_json(o.file, set, a).c_str());
        return;
    }
    if (o.format == Format::csv) {
        std::printf("%s", one_voice_csv(set, a).c_str());
        return;
    }
    std::printf("%s: %s at %s Hz, one voice against a drone\n", o.file.c_str(), duration_words(a.info.dur_s()).c_str(),
                pitch::format_trimmed(a.info.sample_rate_hz, 0).c_str());
    std::printf("%s", root_words(a, o.root, o.a4_hz).c_str());
    if (!a.root_given)
        std::printf(" (%d harmonics agree within %s cents)", a.root.harmonics_used,
                    pitch::format_trimmed(a.root.spread_cents, 3).c_str());
    std::printf("\n");
    std::printf("targets: %s (%s)\n\n", set.id.c_str(), set.title.c_str());
    if (notes.empty()) {
        if (a.on_partials.empty())
            std::printf("%s\n", nothing_found_words(a.heard.loudest_dbfs, a.heard.snr_db, false).c_str());
        print_on_partials(set, a.on_partials, a.root_hz, false, false);
        return;
    }
    const bool drone = a.drone_hz > 0.0;
    std::printf("%4s %8s %8s %10s %8s  %-12s %-24s %8s %8s %8s %8s %6s  %s\n", "#", "start s", "end s", "f0 Hz",
                "ratio", "target", "name", "dev c", "spread c", "settle s", "beat Hz", "pair", "heard");
    int k = 0;
    for (std::size_t i = 0; i < notes.size(); ++i) {
        const pitch::NoteResult& n = notes[i];
        const std::string tgt = target_column(set, n.target_index, n.target_octaves);
        std::string name = target_name(set, n.target_index);
        if (name.size() > 24) name = name.substr(0, 23) + "~";
        const std::string settle = std::isfinite(n.settle_s) ? pitch::format_trimmed(n.settle_s, 2) : "never";
        const std::string pair =
            n.partial_root > 0 ? std::to_string(n.partial_root) + ":" + std::to_string(n.partial_voice) : "-";
        char beat[32] = "-";
        if (std::isfinite(n.beat_hz)) std::snprintf(beat, sizeof beat, "%.2f", n.beat_hz);
        const std::string remark = judgement_words(a.judged[i], set, false);
        std::printf("%4d %8.3f %8.3f %10.3f %8.4f  %-12s %-24s %8s %8.1f %8s %8s %6s  %s%s%s%s\n", ++k, n.start_s,
                    n.end_s, n.centre_f0_hz, n.ratio, tgt.c_str(), name.c_str(), dev_column(n.dev_cents).c_str(),
                    n.spread_cents, settle.c_str(), beat, pair.c_str(), beat_heard_word(n.beat_hz, drone).c_str(),
                    a.notes_clipped[i] > 0 ? "  clipped" : "", remark.empty() ? "" : "  ", remark.c_str());
    }
    const pitch::BeatBands bands;
    std::printf(
        "\ndev: vibrato centre minus target (+ sharp); spread: standard deviation of the held pitch;\n"
        "settle: onset until the centre stays within 5 cents; beat: the rate of the partials a listener hears\n"
        "beat (pair: root partial:voice partial; a simpler ratio's pair where the target's own lies too high);\n"
        "heard: still below %s Hz, countable below %s Hz, flutter to %s Hz, rough above%s.\n",
        pitch::format_trimmed(bands.still_below_hz, 2).c_str(),
        pitch::format_trimmed(bands.countable_below_hz, 2).c_str(),
        pitch::format_trimmed(bands.rough_above_hz, 2).c_str(),
        drone ? "" : " (no drone in the file: rates are those a drone at the root would give)");
    print_summary_text(set, a.summary, false);
    print_on_partials(set, a.on_partials, a.root_hz, false, true);
}

ReportData one_voice_report(const AnalyzeOptions& o, const pitch::TargetSet& set, const OneVoiceAnalysis& a) {
    ReportData d = one_voice_report_data(set, a);
    d.title = base_name(o.file);
    d.subtitle =
        root_words(a, o.root, o.a4_hz) + "   \u00b7   targets: " + set.title + "   \u00b7   analyzed " + today_text();
    return d;
}

// ---------------------------------------------------------------------------
// [SECTION] Two voices
// ---------------------------------------------------------------------------
void print_two_voices(const AnalyzeOptions& o, const pitch::TargetSet& set, const TwoVoiceAnalysis& a) {
    const auto& dyads = a.dyads;
    if (o.format == Format::json) {
        std::printf("%s\n", two_voice_json(o.file, set, a).c_str());
        return;
    }
    if (o.format == Format::csv) {
        std::printf("%s", two_voice_csv(set, a).c_str());
        return;
    }
    std::printf("%s: %s at %s Hz, two voices\n", o.file.c_str(), duration_words(a.info.dur_s()).c_str(),
                pitch::format_trimmed(a.info.sample_rate_hz, 0).c_str());
    if (a.drone_hz > 0.0)
        std::printf("a steady drone at %s Hz is the low voice: it is removed and the other voice measured against it\n",
                    pitch::format_trimmed(a.drone_hz, 3).c_str());
    std::printf("targets: %s (%s)\n\n", set.id.c_str(), set.title.c_str());
    if (dyads.empty()) {
        if (a.on_partials.empty())
            std::printf("%s\n", nothing_found_words(a.heard.loudest_dbfs, a.heard.snr_db, true).c_str());
        print_on_partials(set, a.on_partials, a.drone_hz, true, false);
        return;
    }
    std::printf("%4s %8s %8s %9s %9s %9s  %-12s %-26s %8s %8s %9s %9s\n", "#", "start s", "end s", "low Hz", "high Hz",
                "cents", "target", "name", "dev c", "spread c", "beat Hz", "measured");
    int k = 0;
    for (std::size_t i = 0; i < dyads.size(); ++i) {
        const pitch::DyadResult& d = dyads[i];
        // Named in the octave it was matched at, as the live two-voice readout names it (14/5, not 7/5).
        const std::string tgt = d.target_index < 0 ? "-" : target_text_at(set, d.target_index, d.target_octaves);
        std::string name = target_name_at(set, d.target_index, d.target_octaves);
        if (name.size() > 26) name = name.substr(0, 25) + "~";
        const std::string meas = std::isfinite(d.measured_beat_hz) ? pitch::format_trimmed(d.measured_beat_hz, 2) : "-";
        const std::string remark = judgement_words(a.judged[i], set, true);
        const std::string pred =
            std::isfinite(d.predicted_beat_hz) ? pitch::format_trimmed(d.predicted_beat_hz, 2) : "-";
        std::printf("%4d %8.3f %8.3f %9.3f %9.3f %9.2f  %-12s %-26s %8s %8.1f %9s %9s%s%s%s\n", ++k, d.start_s, d.end_s,
                    d.f_low_hz, d.f_high_hz, d.interval_cents, tgt.c_str(), name.c_str(),
                    dev_column(d.dev_cents).c_str(), d.spread_cents, pred.c_str(), meas.c_str(),
                    d.clipped_frames > 0 ? "  clipped" : "", remark.empty() ? "" : "  ", remark.c_str());
    }
    std::printf(
        "\ndev: interval minus target (+ wide); beat Hz: |q f_high - p f_low| from the f0s, for the partials p and q\n"
        "a listener hears (a simpler ratio's where the target's own lie above the 12th or 4 kHz); measured: from those "
        "partials.\n");
    print_summary_text(set, a.summary, true);
    print_on_partials(set, a.on_partials, a.drone_hz, true, true);
}

ReportData two_voice_report(const AnalyzeOptions& o, const pitch::TargetSet& set, const TwoVoiceAnalysis& a) {
    ReportData d = two_voice_report_data(set, a);
    d.title = base_name(o.file);
    d.subtitle = "two voices   \u00b7   targets: " + set.title + "   \u00b7   analyzed " + today_text();
    return d;
}

// ---------------------------------------------------------------------------
// [SECTION] The command
// ---------------------------------------------------------------------------
// A take's sidecar beside the file supplies what the command line left out (ui/session/take_analysis.h).
AnalyzeOptions with_take_context(AnalyzeOptions o) {
    const TakeDefaults t = take_defaults(o.file);
    if (!t.found) return o;
    if (!o.targets_set && !t.targets.empty()) o.targets = t.targets;
    if (!o.a4_set && t.a4_hz) o.a4_hz = *t.a4_hz;
    if (!o.root_set && o.voices == 1 && !t.root.empty()) o.root = t.root;
    if (o.expect.empty() && !o.targets_set) o.expect = t.expect;
    return o;
}

int run_analyze(const AnalyzeOptions& given) {
    const AnalyzeOptions o = with_take_context(given);
    pitch::check_a4(o.a4_hz);
    if (o.voices != 1 && o.voices != 2) throw UsageError("--voices " + std::to_string(o.voices) + ": choose 1 or 2");
    if (o.channel && *o.channel < 1)
        throw Error("--channel " + std::to_string(*o.channel) + ": channels are numbered from 1");
    if (o.voices == 2 && o.root_set)
        throw UsageError("--root: with --voices 2 the interval is measured between the two voices; leave --root out");
    AnalysisRequest req;
    req.path = o.file;
    req.channel = o.channel.value_or(0) - 1;
    if (o.voices == 1 && pitch::trim(o.root) != "auto") {
        req.root_hz = pitch::parse_root(o.root, o.a4_hz);
    }
    if (!o.lowest.empty()) {
        if (o.voices == 2) throw UsageError("--lowest works with one voice; two voices are followed from 60 Hz");
        req.lowest_hz = parse_lowest(o.lowest, o.a4_hz);
    }
    req.targets = load_target_set(o.targets);
    if (req.targets.targets.empty()) throw Error(o.targets + ": the target set has no targets");
    if (!(o.between_cents > 0.0 && o.between_cents <= 600.0))
        throw Error("--between " + pitch::format_trimmed(o.between_cents, 3) + ": out of range (above 0 to 600 cents)");
    req.intent.between_cents = o.between_cents;
    if (!o.expect.empty()) req.expected = expected_targets(o.expect, req.targets);
    check_report_path(o.report);
    req.keep_trace = !o.report.empty();

    audio::SoundReader reader(o.file, req.channel, kAnalysisBlockFrames);  // the one opening of the file
    ProgressBar bar(base_name(o.file), reader.info().dur_s() > kProgressAfterS);
    const ProgressFn progress = [&bar](double f, const char* stage) { bar.update(f, stage); };

    if (o.voices == 1) {
        const OneVoiceAnalysis a = analyze_one_voice(reader, req, progress);
        bar.clear();
        warn_clipping(a.facts, o.file);
        if (a.notes.empty() && o.format != Format::text)
            tell_nothing_found(o.file, req.targets, a.heard, a.on_partials, a.root_hz, false);
        print_one_voice(o, req.targets, a);
        if (!o.report.empty()) write_report(o.report, one_voice_report(o, req.targets, a));
    } else {
        const TwoVoiceAnalysis a = analyze_two_voices(reader, req, progress);
        bar.clear();
        warn_clipping(a.facts, o.file);
        if (a.dyads.empty() && o.format != Format::text)
            tell_nothing_found(o.file, req.targets, a.heard, a.on_partials, a.drone_hz, true);
        print_two_voices(o, req.targets, a);
        if (!o.report.empty()) write_report(o.report, two_voice_report(o, req.targets, a));
    }
    return 0;
}

}  // namespace

void register_analyze(CLI::App& app, Runner& run) {
    auto o = std::make_shared<AnalyzeOptions>();
    CLI::App* sub = app.add_subcommand("analyze", "Note by note, how pure the intervals of a recorded take were");
    sub->add_option("FILE", o->file, "Sound file (WAV, FLAC, AIFF, Ogg)")->required();
    CLI::Option* root = sub->add_option("--root", o->root,
                                        "The drone's root: auto (found in the file, default), a note (A2) or Hz (110)");
    CLI::Option* a4 = sub->add_option("--a4", o->a4_hz, "A4 reference in Hz for note names (400-480, default 440)");
    CLI::Option* targets = sub->add_option(
        "--targets", o->targets,
        "Target set: a built-in name or a .toml file (default: the take's own when its sidecar is beside the file, "
        "else 7-limit)");
    sub->add_option("--voices", o->voices, "1: a voice against a drone (default); 2: two voices from one microphone");
    add_format_option(*sub, o->format, {Format::text, Format::json, Format::csv});
    sub->add_option("--report", o->report, "Also draw a printable page (PNG) of the trace, notes and summary");
    sub->add_option("--channel", o->channel, "Channel to analyze, from 1 (default: all channels mixed)");
    sub->add_option("--lowest", o->lowest,
                    "One voice: the lowest note to follow, as a note (E1) or in Hz (30-200; default a semitone under "
                    "the drone's root, "
                    "41-55 Hz)");
    sub->add_option("--expect", o->expect,
                    "The targets meant, in order (7/5,10/7,11/8,45/32; one target: every note): each note is judged "
                    "against the one meant");
    sub->add_option("--between", o->between_cents,
                    "Without --expect, a note farther than this many cents from every target is 'between targets' "
                    "(default 25)");
    sub->footer(
        "Exit status: 0 when the file was analyzed, also when it holds no held notes (then a one-line hint names the "
        "level,\nthe estimated signal-to-noise ratio and what to try: on stdout as text, on stderr with --format json "
        "or csv);\n1 for a file that cannot be read, is silent or (without --root) has no steady drone; 2 for bad "
        "usage.");
    sub->callback([o, root, targets, a4, &run] {
        o->root_set = root->count() > 0;
        o->targets_set = targets->count() > 0;
        o->a4_set = a4->count() > 0;
        run = [o] { return run_analyze(*o); };
    });
}

}  // namespace beatless::ui
