// The physics rules of beamdata/FORMAT.md applied to whatever could be read of a library: photon
// beams, electron beams and the CT-number-to-density tables.

#include <countersign/beamdata/conversions.hpp>
#include <countersign/beamdata/validation.hpp>

#include "table_checks.hpp"

#include <algorithm>
#include <cmath>

namespace countersign::beamdata::detail {

namespace {

constexpr Range depth_range{0.0, 50.0, true, SlipHint::mm_for_cm};
constexpr Range field_range{0.0, 60.0, false, SlipHint::mm_for_cm};
constexpr Range off_axis_range{0.0, 40.0, true, SlipHint::mm_for_cm};
constexpr Range signed_off_axis_range{-40.0, 40.0, true, SlipHint::mm_for_cm};
// PDD below 1 % does not occur within 50 cm of water for megavoltage photon beams; a table typed
// as fractions of 1 falls below it.
constexpr Range pdd_range{1.0, 100.0 * (1.0 + normalisation_tolerance_percent / 100.0), true,
                          SlipHint::fraction_for_percent};
// Electron depth doses fall to the bremsstrahlung tail, well below 1 %.
constexpr Range electron_pdd_range{0.0, 100.0 * (1.0 + normalisation_tolerance_percent / 100.0), true,
                                   SlipHint::fraction_for_percent};
constexpr Range tmr_range{0.0, 1.05, false, SlipHint::percent_for_fraction};
constexpr Range scatter_factor_range{0.7, 1.3, true, SlipHint::percent_for_fraction};
constexpr Range oar_range{0.0, 1.3, false, SlipHint::percent_for_fraction};
constexpr Range wedge_range{0.1, 1.0, true, SlipHint::percent_for_fraction};
constexpr Range wedge_oar_range{0.0, 3.0, false, SlipHint::percent_for_fraction};
constexpr Range cutout_range{0.5, 1.3, true, SlipHint::percent_for_fraction};
constexpr Range hu_range{-1100.0, 40000.0, true};
constexpr Range density_range{0.0, 5.0, true, SlipHint::percent_for_fraction};

// Relative electron density of water (0 HU) within 2 % of 1 (FORMAT.md).
constexpr double water_density_tolerance_percent = 2.0;
// Effective SSD of an electron applicator within 15 % of the standard SSD (FORMAT.md).
constexpr double effective_ssd_tolerance_percent = 15.0;

bool present(const Table2D& t) { return !t.rows().empty(); }
bool present(const Table1D& t) { return !t.axis().empty(); }

// Measured TMR against TMR derived from PDD and Sp (DEVELOPERS.md, "Physics") at depths >= dmax; the build-up
// region is left out because electron contamination breaks the relation there (common practice,
// no source).
void check_consistency(TableChecker& checker, const BeamData& beam) {
  PhysicsFindings& findings = checker.findings();
  const auto comparisons =
      compare_tmr(beam.tmr, beam.pdd, beam.sp, beam.pdd_ssd_cm, beam.dmax_cm, beam.dmax_cm);
  for (const auto& c : comparisons) {
    if (c.extrapolated) {
      ++findings.consistency_nodes_skipped;
      continue;
    }
    ++findings.consistency_nodes_compared;
    if (std::abs(c.difference_percent) > consistency_tolerance_percent) {
      checker.add(beam.tmr.file(), "tmr", checker.row_line(beam.tmr.file(), c.row_index), c.column_index + 2,
                  "PDD->TMR relation: tmr " + number_text(c.measured_tmr) + " at depth " +
                      number_text(c.depth_cm) + " cm, field " + number_text(c.field_at_depth_cm) +
                      " cm differs by " + number_text(c.difference_percent, 2) + " % from " +
                      number_text(c.derived_tmr) + " derived from " + beam.pdd.file() + " and " +
                      beam.sp.file() + " (tolerance " + number_text(consistency_tolerance_percent) + " %)",
                  Severity::warning,
                  "TMR differs from the TMR derived from PDD and Sp by more than " +
                      number_text(consistency_tolerance_percent) + " %");
    }
  }
}

// A wedged profile is higher toward the thin end, which the format puts on the negative side.
void check_orientation(TableChecker& checker, const Table2D& t, const std::string& wedge_id) {
  checker.check_ranges(t, depth_range, signed_off_axis_range, wedge_oar_range);
  checker.check_unity_at_zero_column(t, "wedged off-axis ratio");
  std::size_t pairs = 0, reversed = 0;
  for (std::size_t c = 0; c < t.columns().size(); ++c) {
    const double x = t.columns()[c];
    if (x <= 0.0) continue;
    const auto& cols = t.columns();
    const auto mirror = std::find(cols.begin(), cols.end(), -x);
    if (mirror == cols.end()) continue;
    const auto m = static_cast<std::size_t>(std::distance(cols.begin(), mirror));
    for (std::size_t r = 0; r < t.rows().size(); ++r) {
      ++pairs;
      if (t.cell(r, m) < t.cell(r, c)) ++reversed;
    }
  }
  if (pairs == 0) {
    checker.add(
        t.file(), t.quantity(), checker.header_line(t.file()), std::nullopt,
        "wedge " + wedge_id + ": no pair of columns at -x and +x, so the orientation cannot be confirmed",
        Severity::warning);
  } else if (2 * reversed > pairs) {
    checker.add(t.file(), t.quantity(), checker.header_line(t.file()), std::nullopt,
                "wedge " + wedge_id + ": the profile is higher on the positive side in " +
                    std::to_string(reversed) + " of " + std::to_string(pairs) +
                    " mirrored cells; the thin end must be negative (reversed?)",
                Severity::warning);
  }
}

void check_photon_beam(TableChecker& checker, const BeamDraft& draft) {
  const BeamData& beam = draft.data;
  if (present(beam.pdd)) {
    checker.check_ranges(beam.pdd, depth_range, field_range, pdd_range);
    if (draft.dmax_known) {
      checker.check_row_normalisation(beam.pdd, beam.dmax_cm, 100.0, "pdd at dmax");
      checker.warn_rising_beyond(beam.pdd, beam.dmax_cm, "pdd");
    }
  }
  if (present(beam.tmr)) {
    checker.check_ranges(beam.tmr, depth_range, field_range, tmr_range);
    if (draft.dmax_known) checker.check_row_normalisation(beam.tmr, beam.dmax_cm, 1.0, "tmr at dmax");
  }
  for (const Table1D* t : {&beam.sc, &beam.sp}) {
    if (!present(*t)) continue;
    checker.check_ranges(*t, field_range, scatter_factor_range);
    checker.check_value_at(*t, 10.0, 1.0, t->quantity() + "(10)");
    checker.warn_not_rising(*t, t->quantity());
  }
  if (beam.oar) {
    checker.check_ranges(*beam.oar, depth_range, off_axis_range, oar_range);
    checker.check_unity_at_zero_column(*beam.oar, "oar");
  }
  for (const auto& wedge : beam.wedges) {
    if (wedge.table) checker.check_ranges(*wedge.table, depth_range, field_range, wedge_range);
    if (wedge.orientation_table) check_orientation(checker, *wedge.orientation_table, wedge.id);
  }
  if (draft.dmax_known && draft.pdd_ssd_known && present(beam.pdd) && present(beam.tmr) && present(beam.sp))
    check_consistency(checker, beam);
}

void check_electron_beam(TableChecker& checker, const ElectronDraft& draft) {
  const ElectronBeamData& beam = draft.data;
  for (const auto& a : beam.applicators) {
    if (present(a.pdd)) {
      checker.check_ranges(a.pdd, depth_range, field_range, electron_pdd_range);
      checker.check_column_maximum(a.pdd, 100.0, "100 at dmax of each column");
      const auto& fields = a.pdd.columns();
      if (a.field_cm > 0.0 && (a.field_cm < fields.front() || a.field_cm > fields.back()))
        checker.add(a.pdd.file(), "pdd", checker.header_line(a.pdd.file()), std::nullopt,
                    "applicator " + a.id + ": the columns do not cover its open field (" +
                        number_text(a.field_cm) + " cm)",
                    Severity::warning);
    }
    if (a.cutout && present(*a.cutout)) {
      checker.check_ranges(*a.cutout, field_range, cutout_range);
      if (a.field_cm > 0.0)
        checker.check_value_at(
            *a.cutout, a.field_cm, 1.0,
            "cutout factor of the open applicator field (" + number_text(a.field_cm) + " cm)");
    }
    if (draft.pdd_ssd_known && a.effective_ssd_cm > 0.0) {
      const double off_percent = 100.0 * (a.effective_ssd_cm - beam.pdd_ssd_cm) / beam.pdd_ssd_cm;
      if (std::abs(off_percent) > effective_ssd_tolerance_percent)
        checker.add_manifest("applicator " + a.id + ".effective_ssd_cm",
                             number_text(a.effective_ssd_cm) + " cm differs by " +
                                 number_text(off_percent, 1) + " % from the standard SSD " +
                                 number_text(beam.pdd_ssd_cm) + " cm (limit " +
                                 number_text(effective_ssd_tolerance_percent) + " %)",
                             Severity::error);
    }
  }
}

void check_ct_table(const CtDensityTable& table, const Inspection& inspection, PhysicsFindings& findings) {
  const std::string shown = (inspection.root / table.file).string();
  const auto it = inspection.lines.find(shown);
  const auto line = [&](std::size_t i) -> std::optional<std::size_t> {
    if (it == inspection.lines.end() || i >= it->second.row_lines.size()) return std::nullopt;
    return it->second.row_lines[i];
  };
  // A one-machine checker would name machine files; CT tables are named from the library root.
  Machine root_machine;
  root_machine.manifest = inspection.root / "machine.toml";
  TableChecker checker(root_machine, inspection.lines, findings);
  const Table1D as_table{table.file, "relative_electron_density", "hu", table.hu,
                         table.relative_electron_density};
  checker.check_ranges(as_table, hu_range, density_range);
  const DensityLookup water = table.density(0.0);
  if (water.clamped) {
    findings.problems.push_back(Problem{shown, std::nullopt, std::nullopt, std::nullopt,
                                        "relative_electron_density",
                                        "the table does not cover water (0 HU)"});
  } else if (std::abs(100.0 * (water.relative_electron_density - 1.0)) > water_density_tolerance_percent) {
    findings.problems.push_back(
        Problem{shown, std::nullopt, std::nullopt, std::nullopt, "relative_electron_density",
                "water (0 HU) maps to " + number_text(water.relative_electron_density) +
                    ", expected 1 within " + number_text(water_density_tolerance_percent) + " %"});
  }
  for (std::size_t i = 1; i < table.hu.size(); ++i) {
    if (table.relative_electron_density[i] < table.relative_electron_density[i - 1])
      findings.problems.push_back(Problem{
          shown, std::nullopt, line(i), 2, "relative_electron_density",
          "density falls from " + number_text(table.relative_electron_density[i - 1]) + " to " +
              number_text(table.relative_electron_density[i]) + " as HU rises to " + number_text(table.hu[i]),
          Severity::warning, "density does not rise with HU"});
  }
}

}  // namespace

PhysicsFindings check_physics(const Inspection& inspection) {
  PhysicsFindings findings;
  for (const auto& machine : inspection.machines) {
    TableChecker checker(machine.machine, inspection.lines, findings);
    for (const auto& beam : machine.beams) check_photon_beam(checker, beam);
    for (const auto& beam : machine.electron_beams) check_electron_beam(checker, beam);
  }
  for (const auto& table : inspection.ct.tables) check_ct_table(table, inspection, findings);
  return findings;
}

}  // namespace countersign::beamdata::detail
