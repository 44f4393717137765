// `countersign history [--db FILE] [filters]`: the checks the services recorded, newest first, and
// trend statistics per machine, energy and technique (count, mean and SD of the difference, share
// outside tolerance), from which AAPM TG-114 (2011) asks a clinic to set its own action levels.

#include <countersign/cli/commands.hpp>
#include <countersign/report/json_text.hpp>
#include <countersign/service/checking_service.hpp>
#include <countersign/service/history.hpp>
#include <countersign/service/trend.hpp>
#include <countersign/util/text.hpp>

#include <nlohmann/json.hpp>

#include <cstdio>
#include <memory>
#include <optional>
#include <ostream>
#include <string>

namespace countersign::cli {

namespace {

namespace fs = std::filesystem;

struct HistoryCommandOptions {
  std::string db;
  std::string results;
  std::string uid;
  std::string patient;
  std::string machine;
  std::optional<double> energy_mv;
  std::string technique;
  std::string verdict;
  std::string since;
  std::string until;
  bool include_superseded = false;
  std::size_t limit = 50;
  bool trends_only = false;
  bool json = false;
};

std::string fixed(double value, int decimals, bool sign = false) {
  char text[32];
  std::snprintf(text, sizeof text, sign ? "%+.*f" : "%.*f", decimals, value);
  return text;
}

std::string fixed(const std::optional<double>& value, int decimals, bool sign = false) {
  return value ? fixed(*value, decimals, sign) : std::string{"-"};
}

// Left-aligned in `width` columns, and always followed by at least one space.
// A column of the terminal table; values from plans have their control characters escaped.
std::string padded(std::string_view value, std::size_t width) {
  std::string text = escape_control_characters(value);
  text.append(text.size() < width ? width - text.size() : 1, ' ');
  return text;
}

nlohmann::json optional_number(std::optional<double> value) {
  return value ? nlohmann::json(*value) : nlohmann::json();
}

nlohmann::json to_json(const service::CheckRecord& record) {
  nlohmann::json beams = nlohmann::json::array();
  for (const auto& beam : record.beams) {
    beams.push_back({{"beam_number", beam.beam_number},
                     {"beam_name", beam.beam_name},
                     {"machine", beam.machine},
                     {"energy_mv", optional_number(beam.energy_mv)},
                     {"technique", beam.technique},
                     {"status", service::to_string(beam.verdict)},
                     {"deviation_percent", optional_number(beam.deviation_percent)},
                     {"tolerance_percent", optional_number(beam.tolerance_percent)},
                     {"reason", beam.reason}});
  }
  const auto optional_id = [](const std::optional<std::int64_t>& id) {
    return id ? nlohmann::json(*id) : nlohmann::json();
  };
  return {{"check_id", record.id},
          {"checked_at_utc", record.checked_at_utc},
          {"sop_instance_uid", record.sop_instance_uid},
          {"content_sha256", record.content_sha256},
          {"patient_id", record.patient_id},
          {"plan_label", record.plan_label},
          {"status", service::to_string(record.verdict)},
          {"beamdata_sha256", record.beamdata_sha256},
          {"software_version", record.software_version},
          {"source_name", record.source_name},
          {"result_file", record.result_file},
          {"replaces_check_id", optional_id(record.replaces_check_id)},
          {"superseded_by_check_id", optional_id(record.superseded_by_check_id)},
          {"beams", beams}};
}

nlohmann::json to_json(const service::TrendGroup& group) {
  return {{"machine", group.machine},
          {"energy_mv", optional_number(group.energy_mv)},
          {"technique", group.technique},
          {"checked_beams", group.checked_beams},
          {"outside_tolerance_beams", group.outside_tolerance_beams},
          {"not_checked_beams", group.not_checked_beams},
          {"mean_deviation_percent", optional_number(group.mean_deviation_percent)},
          {"sd_deviation_percent", optional_number(group.sd_deviation_percent)},
          {"min_deviation_percent", optional_number(group.min_deviation_percent)},
          {"max_deviation_percent", optional_number(group.max_deviation_percent)},
          {"share_outside_tolerance", optional_number(group.share_outside_tolerance)}};
}

void print_checks(std::ostream& out, const std::vector<service::CheckRecord>& checks) {
  out << "Checks, newest first (" << checks.size() << " shown)\n";
  out << "  " << padded("check", 7) << padded("checked at (UTC)", 22) << padded("SOP Instance UID", 66)
      << padded("patient", 16) << padded("verdict", 19) << "beams  note\n";
  for (const auto& record : checks) {
    std::string note;
    if (record.replaces_check_id) note += "replaces #" + std::to_string(*record.replaces_check_id);
    if (record.superseded_by_check_id) {
      note += (note.empty() ? "" : "; ") + std::string{"superseded by #"} +
              std::to_string(*record.superseded_by_check_id);
    }
    out << "  " << padded("#" + std::to_string(record.id), 7) << padded(record.checked_at_utc, 22)
        << padded(record.sop_instance_uid, 66) << padded(record.patient_id, 16)
        << padded(std::string{service::to_string(record.verdict)}, 19)
        << padded(std::to_string(record.beams.size()), 7) << note << "\n";
  }
}

void print_trends(std::ostream& out, const std::vector<service::TrendGroup>& groups) {
  out << "Trends per machine, energy and technique (difference = 100 (computed - planned) / planned)\n";
  out << "  " << padded("machine", 16) << padded("energy_mv", 11) << padded("technique", 18)
      << padded("beams", 7) << padded("mean_%", 9) << padded("sd_%", 8) << padded("min_%", 9)
      << padded("max_%", 9) << padded("outside_%", 11) << "not_checked\n";
  for (const auto& group : groups) {
    const std::string outside_percent =
        group.share_outside_tolerance ? fixed(*group.share_outside_tolerance * 100.0, 1) : std::string{"-"};
    out << "  " << padded(group.machine, 16) << padded(fixed(group.energy_mv, 1), 11)
        << padded(group.technique, 18) << padded(std::to_string(group.checked_beams), 7)
        << padded(fixed(group.mean_deviation_percent, 2, true), 9)
        << padded(fixed(group.sd_deviation_percent, 2), 8)
        << padded(fixed(group.min_deviation_percent, 2, true), 9)
        << padded(fixed(group.max_deviation_percent, 2, true), 9) << padded(outside_percent, 11)
        << group.not_checked_beams << "\n";
  }
  if (groups.empty()) out << "  (no beams match)\n";
}

ExitCode run_history(const HistoryCommandOptions& options, Io& io) {
  fs::path db = options.db;
  if (db.empty())
    db =
        options.results.empty() ? fs::path{"history.sqlite"} : service::default_history_file(options.results);
  auto history = service::History::open(db, service::HistoryAccess::read_only);
  if (!history) {
    io.err << "countersign history: " << history.error().message() << "\n";
    return ExitCode::bad_input;
  }
  service::HistoryFilter filter;
  if (!options.uid.empty()) filter.sop_instance_uid = options.uid;
  if (!options.patient.empty()) filter.patient_id = options.patient;
  if (!options.machine.empty()) filter.machine = options.machine;
  if (!options.technique.empty()) filter.technique = options.technique;
  if (!options.since.empty()) filter.since_utc = options.since;
  if (!options.until.empty()) filter.until_utc = options.until;
  filter.energy_mv = options.energy_mv;
  if (!options.verdict.empty()) filter.verdict = service::plan_verdict_from_string(options.verdict);
  filter.superseded =
      options.include_superseded ? service::Superseded::include : service::Superseded::exclude;

  // Trends use every matching check; the listing shows the newest `limit`.
  auto all = history->list(filter);
  if (!all) {
    io.err << "countersign history: " << all.error().message() << "\n";
    return ExitCode::bad_input;
  }
  const auto groups = service::summarize_trends(all.value(), filter);
  std::vector<service::CheckRecord> shown = all.value();
  if (shown.size() > options.limit) shown.resize(options.limit);

  if (options.json) {
    nlohmann::json document{{"history_file", db.string()}, {"checks_matching", all->size()}};
    nlohmann::json checks = nlohmann::json::array();
    if (!options.trends_only) {
      for (const auto& record : shown) checks.push_back(to_json(record));
    }
    nlohmann::json trends = nlohmann::json::array();
    for (const auto& group : groups) trends.push_back(to_json(group));
    document["checks"] = checks;
    document["trends"] = trends;
    io.out << report::json_text(document);
    return ExitCode::all_within_tolerance;
  }
  io.out << "History " << db.string() << ": " << all->size() << " check(s) match\n";
  if (!options.trends_only) {
    print_checks(io.out, shown);
    io.out << "\n";
  }
  print_trends(io.out, groups);
  io.out
      << "\nThese statistics support, and do not replace, the physicist's review under local regulations and "
         "licensed practice.\n";
  return ExitCode::all_within_tolerance;
}

}  // namespace

void add_history_command(CLI::App& app, CommandContext& context) {
  auto options = std::make_shared<HistoryCommandOptions>();
  auto* command = app.add_subcommand(
      "history",
      "List the checks recorded by `watch` and `receive` (newest first) and print trend statistics per "
      "machine, "
      "energy and technique: number of checked beams, mean and standard deviation of the difference, share "
      "outside tolerance. A check replaced by a re-export of the same plan is left out unless "
      "--include-superseded.");
  command->add_option("--db", options->db, "history database (default: ./history.sqlite)");
  command->add_option("--results", options->results, "a results folder; uses its history.sqlite")
      ->excludes("--db");
  command->add_option("--uid", options->uid, "only this SOP Instance UID");
  command->add_option("--patient", options->patient, "only this Patient ID");
  command->add_option("--machine", options->machine, "only beams on this Treatment Machine Name");
  command->add_option("--energy", options->energy_mv, "only beams of this nominal energy (MV)");
  command->add_option("--technique", options->technique, "only beams of this technique (e.g. simple/tmr)");
  command->add_option("--verdict", options->verdict, "only plans with this verdict")
      ->check(CLI::IsMember({"within_tolerance", "outside_tolerance", "not_checked"}));
  command->add_option("--since", options->since, "from this UTC date or time on (e.g. 2026-12-01)");
  command->add_option("--until", options->until, "up to and including this UTC date or time");
  command->add_flag("--include-superseded", options->include_superseded,
                    "also checks replaced by a re-export");
  command->add_option("--limit", options->limit, "checks listed (default 50; trends use all that match)");
  command->add_flag("--trends-only", options->trends_only, "print only the trend statistics");
  command->add_flag("--json", options->json, "write JSON");
  command->callback([options, &context] { context.exit_code = run_history(*options, context.io); });
}

}  // namespace countersign::cli
