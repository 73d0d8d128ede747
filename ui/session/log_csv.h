// Log CSV — the practice log as a CSV file a teacher can open, and back.
//
// One row per attempt, RFC 4180 quoting (fields with a comma, quote or line
// break are quoted, quotes doubled), LF line ends, a header row. Columns:
//   uid, started_at, drill, kind, target, target_name, root_hz, performer,
//   dur_s, locked, time_to_lock_s, mean_dev_cents, spread_cents,
//   in_tolerance_share, threshold_cents, trials, correct_share, settings,
//   trace
// Numbers are written in the shortest form that reads back to the same
// double; an empty field is "not known". `settings` is the drill's JSON
// object; `trace` is the trace BLOB (ui/session/practice_log.h) in base64 (RFC 4648),
// exact and compact, and may be left out (the column too) for a smaller file.
// Rows are in start-time order, so export -> import into an empty log ->
// export gives the same bytes. Import checks every row first and refuses the
// whole file on the first bad one ("file.csv:LINE: problem"); attempts whose
// uid is already in the log are skipped, so importing twice adds nothing.
#pragma once

#include "ui/session/practice_log.h"

#include <ostream>
#include <string>
#include <string_view>
#include <vector>

namespace beatless::ui {

// Appends one attempt's row (with a trailing LF) to out.
void append_csv_row(std::string& out, const Attempt& a, bool with_trace);
std::string csv_header(bool with_trace);

// Writes the header and every attempt matching the filter; returns the count.
std::size_t export_csv(const PracticeLog& log, const AttemptFilter& filter, bool with_trace, std::ostream& out);

// Writes attempts kept in memory (see ui/session/log_writer.h) as the same CSV.
std::string attempts_csv(const std::vector<Attempt>& attempts, bool with_trace);

// Parses and checks a whole file. Throws Error "source:LINE: problem".
std::vector<Attempt> parse_log_csv(std::string_view text, const std::string& source, const PracticeLog& checker);

struct ImportResult {
    std::size_t rows = 0;     // attempts in the file
    std::size_t added = 0;    // new to the log
    std::size_t skipped = 0;  // already there (same uid)
};
// Imports in one transaction: everything or nothing.
ImportResult import_csv(PracticeLog& log, std::string_view text, const std::string& source);

// One field, quoted when it holds a comma, a quote or a line break.
std::string csv_field(std::string_view text);

// A uid made from a row's content, for a row whose uid is empty, so the same
// row imported again is recognised: FNV-1a 128-bit (Fowler, Noll, Vo; IETF
// draft-eastlake-fnv, offset basis and prime of 128 bits) as 32 hex digits.
std::string content_uid(std::string_view content);

std::string base64_encode(std::string_view bytes);
// Throws Error naming the problem when the text is not base64.
std::string base64_decode(std::string_view text);

}  // namespace beatless::ui
