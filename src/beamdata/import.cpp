// `beamdata import`: which measured rows feed which table, and the all-or-nothing write.

#include <countersign/beamdata/csv.hpp>
#include <countersign/beamdata/import.hpp>
#include <countersign/beamdata/library_template.hpp>
#include <countersign/beamdata/measured_data.hpp>
#include <countersign/beamdata/sha256.hpp>

#include "csv_reader.hpp"
#include "import_steps.hpp"
#include "import_write.hpp"
#include "library_files.hpp"
#include "table_checks.hpp"

#include <algorithm>
#include <cmath>
#include <set>

namespace countersign::beamdata {

const std::vector<GapLimit>& default_gap_limits() {
  static const std::vector<GapLimit> limits = {
      {"pdd", "depth_cm", 1.0},          {"pdd", "field_cm", 5.0},
      {"tmr", "depth_cm", 1.0},          {"tmr", "field_cm", 5.0},
      {"oar", "off_axis_cm", 1.0},       {"oar", "depth_cm", 5.0},
      {"sc", "field_cm", 5.0},           {"scp", "field_cm", 5.0},
      {"sp", "field_cm", 5.0},           {"wedge_factor", "depth_cm", 5.0},
      {"wedge_factor", "field_cm", 5.0}, {"wedge_profile", "off_axis_cm", 1.0},
      {"wedge_profile", "depth_cm", 5.0}};
  return limits;
}

std::optional<GapLimit> parse_gap_limit(const std::string& text) {
  const auto colon = text.find(':');
  const auto equals = text.find('=');
  if (colon == std::string::npos || equals == std::string::npos || equals < colon) return std::nullopt;
  GapLimit limit{text.substr(0, colon), text.substr(colon + 1, equals - colon - 1), 0.0};
  const auto& known = default_gap_limits();
  if (std::none_of(known.begin(), known.end(),
                   [&](const GapLimit& k) { return k.quantity == limit.quantity && k.axis == limit.axis; }))
    return std::nullopt;
  try {
    std::size_t used = 0;
    limit.max_gap_cm = std::stod(text.substr(equals + 1), &used);
    if (used != text.size() - equals - 1 || !(limit.max_gap_cm > 0.0) || !std::isfinite(limit.max_gap_cm))
      return std::nullopt;
  } catch (const std::exception&) {
    return std::nullopt;
  }
  return limit;
}

namespace detail {
namespace {

class Importer {
 public:
  Importer(const ImportOptions& options, const ImportTargets& targets, const MeasuredData& data,
           ImportResult& result)
      : o_(options), targets_(targets), data_(data), result_(result) {}

  void run();
  [[nodiscard]] std::vector<PendingTable>& pending() { return pending_; }

 private:
  double gap(const std::string& quantity, const std::string& axis) const;
  std::vector<const MeasuredPoint*> rows_of(const std::string& quantity, const std::string& wedge = {}) const;
  std::optional<std::string> target(const std::string& key, const std::string& what);
  Grid grid_of(const std::string& relative, const std::string& row_axis, const std::vector<double>& rows,
               const std::vector<double>& columns) const;
  bool needs(const MeasuredPoint& p, bool field, bool depth, bool off_axis);
  void problem(std::string message, std::string key = {});

  void depth_family(const std::string& quantity, double normalise_to, int decimals);
  void profiles(const std::string& quantity, const std::string& wedge, const std::string& relative);
  void factors();
  void wedge_factor(const std::string& wedge, const WedgeTarget& target);

  const ImportOptions& o_;
  const ImportTargets& targets_;
  const MeasuredData& data_;
  ImportResult& result_;
  std::vector<PendingTable> pending_;
  TemplateGrid defaults_ = default_template_grid();
};

double Importer::gap(const std::string& quantity, const std::string& axis) const {
  for (const auto& limit : o_.gap_limits)
    if (limit.quantity == quantity && limit.axis == axis) return limit.max_gap_cm;
  for (const auto& limit : default_gap_limits())
    if (limit.quantity == quantity && limit.axis == axis) return limit.max_gap_cm;
  return 0.0;
}

std::vector<const MeasuredPoint*> Importer::rows_of(const std::string& quantity,
                                                    const std::string& wedge) const {
  std::vector<const MeasuredPoint*> rows;
  for (const auto& p : data_.points) {
    if (p.quantity == quantity && (p.beam.empty() || p.beam == o_.beam_id) && p.wedge == wedge)
      rows.push_back(&p);
  }
  return rows;
}

void Importer::problem(std::string message, std::string key) {
  result_.problems.push_back(Problem{data_.file.string(), std::nullopt, std::nullopt, std::nullopt,
                                     std::move(key), std::move(message)});
}

std::optional<std::string> Importer::target(const std::string& key, const std::string& what) {
  const auto it = targets_.tables.find(key);
  if (it != targets_.tables.end()) return it->second;
  result_.notes.push_back(what + " rows not imported: the manifest names no [beam.tables] " + key +
                          " for beam " + o_.beam_id);
  return std::nullopt;
}

// The grid of the table file as it is (a template or an earlier import), else the defaults.
Grid Importer::grid_of(const std::string& relative, const std::string& row_axis,
                       const std::vector<double>& rows, const std::vector<double>& columns) const {
  if (const auto text = read_file(o_.machine_folder / relative)) {
    if (auto grid = parse_grid(*text, row_axis)) return *grid;
  }
  return Grid{rows, columns};
}

bool Importer::needs(const MeasuredPoint& p, bool field, bool depth, bool off_axis) {
  std::vector<std::string> missing;
  if (field && !p.field_cm) missing.emplace_back("a field size");
  if (depth && !p.depth_cm) missing.emplace_back("a depth");
  if (off_axis && !p.off_axis_cm) missing.emplace_back("an off-axis distance");
  if (missing.empty()) return true;
  std::string list;
  for (std::size_t i = 0; i < missing.size(); ++i)
    list += (i == 0 ? "" : i + 1 == missing.size() ? " and " : ", ") + missing[i];
  result_.problems.push_back(Problem{data_.file.string(), std::nullopt, p.line, std::nullopt, p.quantity,
                                     "a " + p.quantity + " row needs " + list, Severity::error,
                                     "measured row lacks a coordinate"});
  return false;
}

void Importer::depth_family(const std::string& quantity, double normalise_to, int decimals) {
  const auto rows = rows_of(quantity);
  if (rows.empty()) return;
  const auto relative = target(quantity, quantity);
  if (!relative) return;
  const std::optional<double> dmax = o_.dmax_cm ? o_.dmax_cm : targets_.dmax_cm;
  if (!dmax)
    return problem(
        "normalising " + quantity + " needs dmax: the manifest's dmax_cm is not filled in; give --dmax-cm",
        quantity);
  std::vector<Sample> samples;
  for (const auto* p : rows) {
    if (!needs(*p, true, true, false)) continue;
    if (quantity == "pdd" && p->ssd_cm && targets_.pdd_ssd_cm &&
        std::abs(*p->ssd_cm - *targets_.pdd_ssd_cm) > 0.05) {
      result_.problems.push_back(Problem{data_.file.string(), std::nullopt, p->line, std::nullopt, "pdd",
                                         "measured at SSD " + number_text(*p->ssd_cm) +
                                             " cm; the manifest's pdd_ssd_cm is " +
                                             number_text(*targets_.pdd_ssd_cm) + " cm",
                                         Severity::error, "pdd measured at another SSD"});
      continue;
    }
    samples.push_back({*p->depth_cm, *p->field_cm, p->value});
  }
  const Grid grid = grid_of(*relative, "depth_cm", defaults_.depths_cm, defaults_.fields_cm);
  GridRequest r{quantity,
                "depth_cm",
                "field_cm",
                grid.rows,
                grid.columns,
                CurvesRun::along_rows,
                o_.method,
                gap(quantity, "depth_cm"),
                gap(quantity, "field_cm"),
                Normalisation{*dmax, normalise_to},
                false};
  auto values = resample_grid(samples, r, (o_.machine_folder / *relative).string(), result_.problems);
  const std::string method = describe(o_.method) + "; each measured field normalised to " +
                             number_text(normalise_to) + " at dmax " + number_text(*dmax) + " cm";
  pending_.push_back(
      PendingTable::two_axis(*relative, quantity, r, std::move(values), decimals, samples.size(), method));
}

void Importer::profiles(const std::string& quantity, const std::string& wedge, const std::string& relative) {
  const auto rows = rows_of(quantity, wedge);
  std::vector<Sample> samples;
  std::set<double> fields;
  for (const auto* p : rows) {
    if (!needs(*p, false, true, true)) continue;
    samples.push_back({*p->depth_cm, *p->off_axis_cm, p->value});
    if (p->field_cm) fields.insert(*p->field_cm);
  }
  if (fields.size() > 1)
    return problem(
        quantity + " rows come from " + std::to_string(fields.size()) +
            " field sizes; the table has no field axis: keep the profiles of one field in the file",
        quantity);
  const bool oar = quantity == "oar";
  const Grid grid = grid_of(relative, "depth_cm", defaults_.oar_depths_cm,
                            oar ? defaults_.off_axis_cm : defaults_.wedge_axis_cm);
  const std::string table_quantity = oar ? "oar" : "wedge_oar";
  GridRequest r{table_quantity,
                "depth_cm",
                oar ? "off_axis_cm" : "wedge_axis_cm",
                grid.rows,
                grid.columns,
                CurvesRun::along_columns,
                o_.method,
                gap(quantity, "off_axis_cm"),
                gap(quantity, "depth_cm"),
                Normalisation{0.0, 1.0},
                oar};
  auto values = resample_grid(samples, r, (o_.machine_folder / relative).string(), result_.problems);
  const std::string method =
      describe(o_.method) + "; each profile normalised to 1 on the central axis" +
      (oar ? "; the two halves averaged at equal distance" : "; signed distance, thin end negative");
  pending_.push_back(
      PendingTable::two_axis(relative, table_quantity, r, std::move(values), 4, samples.size(), method));
}

void Importer::factors() {
  const auto points_of = [&](const std::string& quantity) {
    std::vector<std::pair<double, double>> points;
    for (const auto* p : rows_of(quantity))
      if (needs(*p, true, false, false)) points.emplace_back(*p->field_cm, p->value);
    return points;
  };
  const auto sc = points_of("sc");
  const auto scp = points_of("scp");
  const auto sp = points_of("sp");
  const auto one_axis = [&](const std::string& key, std::size_t points, const std::string& method,
                            const auto& make) {
    const auto relative = target(key, key);
    if (!relative) return;
    const Grid grid = grid_of(*relative, "field_cm", defaults_.fields_cm, {});
    const std::string file = (o_.machine_folder / *relative).string();
    auto values = make(grid.rows, file);
    pending_.push_back(PendingTable::one_axis(*relative, key, grid.rows, std::move(values), method));
    pending_.back().measured_points = points;
  };
  const auto resampled = [&](const auto& points, const std::string& quantity, const std::vector<double>& axis,
                             const std::string& file) {
    return resample_factor(points, axis, 10.0, o_.method, gap(quantity, "field_cm"), quantity, file,
                           result_.problems);
  };
  const std::string normalised = describe(o_.method) + "; normalised to 1 at the 10 cm field";
  if (!sc.empty())
    one_axis("sc", sc.size(), normalised,
             [&](const auto& axis, const auto& file) { return resampled(sc, "sc", axis, file); });
  if (!sp.empty() && !scp.empty())
    return problem("both sp and scp rows: give Sp directly or as Scp with Sc, not both", "sp");
  if (!scp.empty() && sc.empty()) return problem("scp rows need sc rows: Sp = Scp / Sc", "scp");
  if (!sp.empty())
    one_axis("sp", sp.size(), normalised,
             [&](const auto& axis, const auto& file) { return resampled(sp, "sp", axis, file); });
  if (!scp.empty())
    one_axis("sp", scp.size() + sc.size(), normalised + "; Sp = Scp / Sc at each field",
             [&](const auto& axis, const auto& file) {
               auto total = resampled(scp, "scp", axis, file);
               const auto collimator = resampled(sc, "sc", axis, file);
               for (std::size_t i = 0; i < total.size() && i < collimator.size(); ++i)
                 total[i] /= collimator[i];
               return total;
             });
}

void Importer::wedge_factor(const std::string& wedge, const WedgeTarget& target) {
  const auto rows = rows_of("wedge_factor", wedge);
  if (rows.empty()) return;
  if (target.table.empty()) {
    for (const auto* p : rows) {
      std::string note = wedge + ": measured wedge factor " + number_text(p->value) +
                         (p->field_cm ? " at field " + number_text(*p->field_cm) + " cm" : "") +
                         (p->depth_cm ? ", depth " + number_text(*p->depth_cm) + " cm" : "");
      if (target.factor)
        note += "; the manifest's constant factor is " + number_text(*target.factor) + " (" +
                number_text(100.0 * (p->value - *target.factor) / *target.factor, 2) + " %)";
      result_.notes.push_back(note + "; not written (the manifest names no wedge table)");
    }
    return;
  }
  std::vector<Sample> samples;
  for (const auto* p : rows)
    if (needs(*p, true, true, false)) samples.push_back({*p->depth_cm, *p->field_cm, p->value});
  const Grid grid = grid_of(target.table, "depth_cm", defaults_.wedge_depths_cm, defaults_.fields_cm);
  GridRequest r{"wedge_factor",
                "depth_cm",
                "field_cm",
                grid.rows,
                grid.columns,
                CurvesRun::along_rows,
                o_.method,
                gap("wedge_factor", "depth_cm"),
                gap("wedge_factor", "field_cm"),
                std::nullopt,
                false};
  auto values = resample_grid(samples, r, (o_.machine_folder / target.table).string(), result_.problems);
  pending_.push_back(PendingTable::two_axis(target.table, "wedge_factor", r, std::move(values), 4,
                                            samples.size(),
                                            describe(o_.method) + "; as measured (no normalisation)"));
}

void Importer::run() {
  std::size_t other_beams = 0;
  for (const auto& p : data_.points) other_beams += !p.beam.empty() && p.beam != o_.beam_id;
  if (other_beams > 0) result_.notes.push_back(std::to_string(other_beams) + " rows of other beams skipped");
  depth_family("pdd", 100.0, 2);
  depth_family("tmr", 1.0, 4);
  if (!rows_of("oar").empty()) {
    if (const auto relative = target("oar", "oar")) profiles("oar", "", *relative);
  }
  factors();
  std::set<std::string> wedges;
  for (const auto& p : data_.points)
    if (!p.wedge.empty() && (p.beam.empty() || p.beam == o_.beam_id)) wedges.insert(p.wedge);
  for (const auto& id : wedges) {
    const auto it = targets_.wedges.find(id);
    if (it == targets_.wedges.end()) {
      result_.notes.push_back("wedge " + id + " rows not imported: beam " + o_.beam_id + " has no wedge " +
                              id);
      continue;
    }
    wedge_factor(id, it->second);
    if (!rows_of("wedge_profile", id).empty()) {
      if (it->second.orientation_table.empty()) {
        result_.notes.push_back("wedge " + id +
                                " profile rows not imported: the manifest names no orientation_table");
      } else {
        profiles("wedge_profile", id, it->second.orientation_table);
      }
    }
  }
  if (pending_.empty() && result_.problems.empty())
    problem("no measured rows for beam " + o_.beam_id + " could be imported");
}

}  // namespace
}  // namespace detail

ImportResult import_measured_data(const ImportOptions& options) {
  ImportResult result;
  const MeasuredData data = read_measured_data(options.measured_file);
  result.measured_sha256_hex = data.sha256_hex;
  result.problems = data.problems;
  const auto targets = detail::read_import_targets(options.machine_folder, options.beam_id, result.problems);
  if (!targets || !data.problems.empty()) return result;
  detail::Importer importer(options, *targets, data, result);
  importer.run();
  if (!result.ok()) return result;
  detail::write_import(options, data, importer.pending(), result);
  return result;
}

}  // namespace countersign::beamdata
