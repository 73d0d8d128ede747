// beatless history [--target R] [--drill ID] [--since DATE] [--voices 1|2] [--by day|week|month]
//                  [--format text|json|csv] [--log FILE]
// beatless history --export FILE.csv [--no-traces] [filters]
// beatless history --import FILE.csv
//
// Summarises the practice log (ui/session/log_summary.h): attempts per target, mean
// deviation and spread over time, the ear-training threshold over time.
// --export writes the attempts as CSV (ui/session/log_csv.h; "-" for stdout) and
// --import reads such a file into the log, all rows or none, so a teacher
// can look at a student's practice and the student can merge logs.
#include "pitch/base/error.h"
#include "pitch/theory/interval.h"
#include "ui/commands/commands.h"
#include "ui/session/log_csv.h"
#include "ui/session/log_summary.h"
#include "ui/session/paths.h"
#include "ui/session/practice_log.h"
#include "ui/session/safe_file.h"
#include "ui/session/usage_error.h"

#include <cstdio>
#include <filesystem>
#include <fstream>
#include <iostream>
#include <map>
#include <memory>
#include <sstream>

namespace beatless::ui {

namespace {

namespace fs = std::filesystem;

struct HistoryCmd {
    std::string target;
    std::string drill;
    std::string since;
    Period by = Period::week;
    Format format = Format::text;
    std::string log_file;
    std::string export_file;
    std::string import_file;
    bool no_traces = false;
    bool with_demo = false;
    int voices = 0;
};

int run_import(const HistoryCmd& o, const fs::path& log_path) {
    const std::string text = read_text_file(o.import_file, kCsvLimitBytes, "CSV file");
    PracticeLog log(log_path);
    const ImportResult r = import_csv(log, text, o.import_file);
    std::printf("imported %zu %s from %s into %s", r.added, r.added == 1 ? "attempt" : "attempts",
                o.import_file.c_str(), log_path.c_str());
    if (r.skipped) std::printf(" (%zu already in the log)", r.skipped);
    std::printf("\n");
    return 0;
}

int run_export(const HistoryCmd& o, const fs::path& log_path, const AttemptFilter& filter) {
    std::error_code ec;
    if (!fs::exists(log_path, ec))
        throw Error("practice log " + log_path.string() + ": no such file (nothing practised yet?)");
    PracticeLog log(log_path);
    if (o.export_file == "-") {
        std::ostringstream out;
        export_csv(log, filter, !o.no_traces, out);
        std::fwrite(out.str().data(), 1, out.str().size(), stdout);
        return 0;
    }
    // Written beside the destination and renamed, so a failure leaves no half file.
    SafeOutput file(o.export_file);
    std::ostringstream out;
    const std::size_t n = export_csv(log, filter, !o.no_traces, out);
    file.write(out.str());
    file.commit();
    std::printf("exported %zu %s to %s\n", n, n == 1 ? "attempt" : "attempts", o.export_file.c_str());
    return 0;
}

int run_history(const HistoryCmd& o) {
    if (!o.export_file.empty() && !o.import_file.empty())
        throw UsageError("history: give --export or --import, not both");
    if (o.no_traces && o.export_file.empty()) throw UsageError("history: --no-traces goes with --export");
    const fs::path log_path = o.log_file.empty() ? practice_log_path() : fs::path(o.log_file);
    AttemptFilter filter;
    if (!o.target.empty()) {
        try {
            filter.target = pitch::parse_interval(o.target).str();
        } catch (const Error& e) {
            throw UsageError(std::string("--target: ") + e.what());
        }
    }
    filter.drill = o.drill;
    filter.simulated = o.with_demo;
    filter.voices = o.voices;
    if (!o.since.empty()) filter.since = parse_since(o.since);
    if (!o.import_file.empty()) return run_import(o, log_path);
    if (!o.export_file.empty()) return run_export(o, log_path, filter);

    std::error_code ec;
    HistorySummary s;
    if (fs::exists(log_path, ec)) {
        PracticeLog log(log_path);
        s = summarize_history(log, HistoryOptions{filter, o.by});
    } else {
        s.log_path = log_path.string();  // nothing practised yet: an empty summary, and no file made
        s.since = filter.since;
        s.by = o.by;
    }
    const std::string out = o.format == Format::json  ? render_history_json(s)
                            : o.format == Format::csv ? render_history_csv(s)
                                                      : render_history_text(s);
    std::fwrite(out.data(), 1, out.size(), stdout);
    return 0;
}

}  // namespace

void register_history(CLI::App& app, Runner& run) {
    auto o = std::make_shared<HistoryCmd>();
    CLI::App* sub = app.add_subcommand("history", "Summarise the practice log; export or import it as CSV");
    sub->add_option("--target", o->target, "Only this target (7/5, 600c); ear drills that offer it");
    sub->add_option("--drill", o->drill, "Only this drill id");
    sub->add_option("--since", o->since, "Only attempts from this UTC date or time on (YYYY-MM-DD[THH:MM[:SS]])");
    sub->add_option("--voices", o->voices,
                    "Only holds on one voice (1) or on the interval of two voices (2: double stops); default both, "
                    "kept apart; ear drills count as one")
        ->check(CLI::IsMember({1, 2}));
    const std::map<std::string, Period> periods{{"day", Period::day}, {"week", Period::week}, {"month", Period::month}};
    sub->add_option("--by", o->by, "Over-time buckets: day, week (default) or month")
        ->transform(CLI::CheckedTransformer(periods, CLI::ignore_case).description(""));
    add_format_option(*sub, o->format, true);
    sub->add_option("--log", o->log_file, "Practice log file (default: the data folder's practice.sqlite3)");
    sub->add_option("--export", o->export_file, "Write the attempts as CSV to FILE ('-' for stdout)");
    sub->add_option("--import", o->import_file, "Add the attempts of a CSV export to the log (all or none)");
    sub->add_flag("--with-demo", o->with_demo,
                  "Include the attempts of the demo performer and the simulated listener (left out by default)");
    sub->add_flag("--no-traces", o->no_traces, "With --export: leave out the pitch traces (a smaller file)");
    sub->callback([o, &run] { run = [o] { return run_history(*o); }; });
}

}  // namespace beatless::ui
