#pragma once

// Commissioning conversions between beam-data quantities (DEVELOPERS.md, "Physics"). Point functions first,
// then whole-table conversions built on them. Field sizes are square-field sides in cm.

#include <countersign/beamdata/table.hpp>

#include <cstddef>
#include <vector>

namespace countersign::beamdata {

// Sterling's equivalent square of a rectangle: 4 A / P = 2 w l / (w + l).
[[nodiscard]] double equivalent_square_cm(double width_cm, double length_cm);

// A field side projected from the surface (at ssd_cm) to a depth by divergence: s (f + d) / f.
[[nodiscard]] double field_at_depth_cm(double field_at_surface_cm, double ssd_cm, double depth_cm);

// Mayneord F factor: PDD(d, s, ssd) ~ F PDD(d, s, table_ssd), same field at the surface.
// F = [ (ssd + dm)/(table_ssd + dm) * (table_ssd + d)/(ssd + d) ]^2. Ignores the change in
// phantom scatter.
[[nodiscard]] double mayneord_f_factor(double ssd_cm, double table_ssd_cm, double dmax_cm, double depth_cm);

// TMR(d, s_d) from PDD(d, s, f) in percent:
//   TMR = PDD/100 ((f + d)/(f + dm))^2 Sp(s_dm)/Sp(s_d),
// with sp_at_depth_field = Sp(s_d), s_d = s (f+d)/f and sp_at_dmax_field = Sp(s_dm), s_dm = s (f+dm)/f.
[[nodiscard]] double tmr_from_pdd(double pdd_percent, double depth_cm, double ssd_cm, double dmax_cm,
                                  double sp_at_depth_field, double sp_at_dmax_field);

// The inverse of tmr_from_pdd: PDD in percent from TMR(d, s_d) and the same Sp values.
[[nodiscard]] double pdd_from_tmr(double tmr, double depth_cm, double ssd_cm, double dmax_cm,
                                  double sp_at_depth_field, double sp_at_dmax_field);

// A table computed from other tables, with the cells whose inputs needed extrapolation.
struct DerivedTable {
  Table2D table;
  std::vector<bool> extrapolated;  // row-major like the table; true where an input lookup extrapolated
  std::vector<std::string> how;    // row-major: for extrapolated cells, which lookup went outside which
                                   // table ("pdd field_cm 2.91 beyond the table's end node 3"); else empty
  [[nodiscard]] std::size_t extrapolated_count() const;
};

// One sentence per extrapolated axis of the lookups ("sp field_cm 45 beyond the table's end node 40").
[[nodiscard]] std::string extrapolation_text(const std::vector<Lookup>& lookups);

// A TMR table (depth x field at depth) from a PDD table (depth x field at the surface, measured at
// pdd_ssd_cm) and Sp. Output rows are the PDD depths; output columns are fields_at_depth_cm.
[[nodiscard]] DerivedTable derive_tmr_table(const Table2D& pdd, const Table1D& sp, double pdd_ssd_cm,
                                            double dmax_cm, const std::vector<double>& fields_at_depth_cm,
                                            const std::string& output_file);

// A PDD table at another SSD by the Mayneord F factor (same depths and surface fields).
[[nodiscard]] Table2D rescale_pdd_table(const Table2D& pdd, double table_ssd_cm, double new_ssd_cm,
                                        double dmax_cm, const std::string& output_file);

// The same on another grid of depths and surface fields: each cell is the PDD looked up (bilinear)
// at the node times the F factor; cells outside the PDD table are marked extrapolated.
[[nodiscard]] DerivedTable rescale_pdd_table(const Table2D& pdd, double table_ssd_cm, double new_ssd_cm,
                                             double dmax_cm, const std::vector<double>& depths_cm,
                                             const std::vector<double>& fields_cm,
                                             const std::string& output_file);

// One node of a measured TMR table against the TMR derived from the PDD table.
struct TmrComparison {
  std::size_t row_index = 0;  // node of the measured TMR table
  std::size_t column_index = 0;
  double depth_cm = 0.0;
  double field_at_depth_cm = 0.0;
  double measured_tmr = 0.0;
  double derived_tmr = 0.0;
  double difference_percent = 0.0;  // 100 (measured - derived) / derived
  bool extrapolated = false;        // the derivation needed a PDD or Sp lookup outside its table
};

// Compares every node of the measured TMR table with depth >= min_depth_cm.
[[nodiscard]] std::vector<TmrComparison> compare_tmr(const Table2D& measured_tmr, const Table2D& pdd,
                                                     const Table1D& sp, double pdd_ssd_cm, double dmax_cm,
                                                     double min_depth_cm);

}  // namespace countersign::beamdata
