// `countersign history [--db FILE|URI | --results DIR] [filters]`: every check the services recorded,
// newest first (flagged and superseded ones included; filters narrow), one check in full with its
// reviews and the other checks of the same plan (--check ID), and trend statistics per machine,
// energy and technique (count, mean and SD of the difference, share outside tolerance), from which
// AAPM TG-114 (2011) asks a clinic to set its own action levels.

#include <countersign/check/tolerance_policy.hpp>
#include <countersign/cli/commands.hpp>
#include <countersign/engine/point_dose.hpp>
#include <countersign/report/json_text.hpp>
#include <countersign/store/trend.hpp>
#include <countersign/util/text.hpp>

#include "history_output.hpp"
#include "store_options.hpp"

#include <memory>
#include <optional>
#include <ostream>
#include <string>

namespace countersign::cli {

namespace {

struct HistoryCommandOptions {
  StoreFlags store;
  std::optional<std::int64_t> check_id;
  std::string uid;
  std::string patient;
  std::string machine;
  std::optional<double> energy_mv;
  std::string technique;
  std::string verdict;
  std::string since;
  std::string until;
  std::string station;
  bool open = false;
  bool reviewed = false;
  bool current_only = false;
  bool include_superseded = false;  // accepted for scripts of the first version; every check is listed anyway
  std::size_t limit = 50;
  bool trends_only = false;
  bool json = false;
};

// "simple/tmr", "modulated/pdd", ..., or "unknown": the words the services record.
bool is_known_technique(const std::string& technique) {
  if (technique == "unknown") return true;
  for (const auto category :
       {check::FieldCategory::simple, check::FieldCategory::complex, check::FieldCategory::modulated}) {
    for (const auto method : {engine::Method::tmr, engine::Method::pdd}) {
      if (technique == std::string{check::to_code(category)} + "/" + std::string{engine::to_code(method)})
        return true;
    }
  }
  return false;
}

// The filter the options ask for; a value that could never match because it is malformed is an error.
Expected<store::CheckFilter> filter_from(const HistoryCommandOptions& options) {
  store::CheckFilter filter;
  if (!options.uid.empty()) filter.sop_instance_uid = options.uid;
  if (!options.patient.empty()) filter.patient_id = options.patient;
  if (!options.machine.empty()) filter.machine = options.machine;
  if (!options.station.empty()) filter.station = options.station;
  if (!options.technique.empty()) {
    if (!is_known_technique(options.technique)) {
      return Error{
          ErrorKind::usage, "", "--technique", "",
          "\"" + options.technique +
              "\" is not a technique (CATEGORY/FORMALISM with simple, complex or modulated and tmr or "
              "pdd, e.g. simple/tmr; or unknown)"};
    }
    filter.technique = options.technique;
  }
  if (!options.since.empty()) {
    auto since = store::parse_time_bound(options.since, "--since");
    if (!since) return since.error();
    filter.since_utc = since.value();
  }
  if (!options.until.empty()) {
    auto until = store::parse_time_bound(options.until, "--until");
    if (!until) return until.error();
    filter.until_utc = until.value();
  }
  if (options.energy_mv && !(*options.energy_mv > 0.0 && *options.energy_mv < 100.0)) {
    return Error{ErrorKind::usage, "", "--energy", "", "a nominal energy in MV is above 0 and below 100"};
  }
  filter.energy_mv = options.energy_mv;
  if (!options.verdict.empty()) filter.verdict = store::plan_verdict_from_string(options.verdict);
  filter.superseded = options.current_only ? store::Superseded::exclude : store::Superseded::include;
  if (options.open) filter.review = store::ReviewFilter::open;
  if (options.reviewed) filter.review = store::ReviewFilter::reviewed;
  return filter;
}

ExitCode show_one_check(store::Store& history, std::int64_t id, const HistoryCommandOptions& options,
                        Io& io) {
  auto detail = history.get_check(id);
  if (!detail) {
    io.err << "countersign history: " << escape_control_characters(detail.error().message()) << "\n";
    return ExitCode::bad_input;
  }
  if (!detail->has_value()) {
    io.err << "countersign history: --check: there is no check #" << id << " in "
           << history.location().describe() << "\n";
    return ExitCode::bad_input;
  }
  if (options.json) {
    io.out << report::json_text(check_detail_to_json(**detail));
  } else {
    print_check_detail(io.out, **detail);
  }
  return ExitCode::all_within_tolerance;
}

ExitCode run_history(const HistoryCommandOptions& options, Io& io) {
  auto filter = filter_from(options);
  if (!filter) {
    io.err << "countersign history: " << escape_control_characters(filter.error().message()) << "\n";
    return ExitCode::bad_input;
  }
  auto history = open_store(options.store, store::Access::read_only);
  if (!history) {
    io.err << "countersign history: " << escape_control_characters(history.error().message()) << "\n";
    return ExitCode::bad_input;
  }
  if (options.check_id) return show_one_check(*history.value(), *options.check_id, options, io);

  // Trends use every matching check; the listing shows the newest `limit`.
  auto all = history.value()->list_checks(filter.value());
  if (!all) {
    io.err << "countersign history: " << escape_control_characters(all.error().message()) << "\n";
    return ExitCode::bad_input;
  }
  const auto groups = store::summarize_trends(all.value(), filter.value());
  std::vector<store::CheckRecord> shown = all.value();
  if (shown.size() > options.limit) shown.resize(options.limit);
  const store::StoreLocation& location = history.value()->location();
  const std::string where = location.backend == store::Backend::sqlite ? location.text : location.describe();

  if (options.json) {
    nlohmann::json document{
        {"history_file", where}, {"store", location.describe()}, {"checks_matching", all->size()}};
    nlohmann::json checks = nlohmann::json::array();
    if (!options.trends_only) {
      for (const auto& record : shown) checks.push_back(check_to_json(record));
    }
    nlohmann::json trends = nlohmann::json::array();
    for (const auto& group : groups) trends.push_back(trend_to_json(group));
    document["checks"] = checks;
    document["trends"] = trends;
    io.out << report::json_text(document);
    return ExitCode::all_within_tolerance;
  }
  io.out << "History " << escape_control_characters(where) << ": " << all->size() << " check(s) match\n";
  if (!options.trends_only) {
    print_checks(io.out, shown);
    io.out << "\n";
  }
  print_trends(io.out, groups);
  io.out << "\n" << caution_line << "\n";
  return ExitCode::all_within_tolerance;
}

}  // namespace

void add_history_command(CLI::App& app, CommandContext& context) {
  auto options = std::make_shared<HistoryCommandOptions>();
  auto* command = app.add_subcommand(
      "history",
      "List every check recorded by `watch` and `receive`, newest first: flagged plans and plans replaced by "
      "a "
      "re-export included (filters narrow the list), with the state of their review; one check in full with "
      "--check ID; and trend statistics per machine, energy and technique: number of checked beams, mean and "
      "standard deviation of the difference, share outside tolerance.");
  add_store_options(*command, options->store);
  command->add_option("--check", options->check_id,
                      "show this check in full: beams, files, reviews, audit entry, "
                      "and every other check of the same plan");
  command->add_option("--uid", options->uid, "only this SOP Instance UID");
  command->add_option("--patient", options->patient, "only this Patient ID");
  command->add_option("--machine", options->machine, "only beams on this Treatment Machine Name");
  command->add_option("--energy", options->energy_mv, "only beams of this nominal energy (MV)");
  command->add_option(
      "--technique", options->technique,
      "only beams of this technique: simple, complex or modulated / tmr or pdd (e.g. simple/tmr), "
      "or unknown");
  command->add_option("--verdict", options->verdict, "only plans with this verdict")
      ->check(CLI::IsMember({"within_tolerance", "outside_tolerance", "not_checked"}));
  command->add_option("--since", options->since,
                      "from this UTC date or time on (YYYY, YYYY-MM, YYYY-MM-DD, YYYY-MM-DDThh:mm[:ss])");
  command->add_option("--until", options->until, "up to and including this UTC date or time");
  command->add_option("--station", options->station, "only checks made on this host");
  auto* open =
      command->add_flag("--open", options->open,
                        "only flagged plans (outside tolerance or not checked) nobody has reviewed yet");
  command->add_flag("--reviewed", options->reviewed, "only checks with at least one review")->excludes(open);
  command->add_flag("--current-only", options->current_only,
                    "leave out checks replaced by a re-export of the same plan");
  command->add_flag("--include-superseded", options->include_superseded,
                    "(the default; kept for scripts of the first version)");
  command->add_option("--limit", options->limit, "checks listed (default 50; trends use all that match)");
  command->add_flag("--trends-only", options->trends_only, "print only the trend statistics");
  command->add_flag("--json", options->json, "write JSON");
  command->callback([options, &context] { context.exit_code = run_history(*options, context.io); });
}

}  // namespace countersign::cli
