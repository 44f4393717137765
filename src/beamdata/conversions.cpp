#include <countersign/beamdata/conversions.hpp>

#include <algorithm>
#include <cmath>
#include <sstream>
#include <stdexcept>

namespace countersign::beamdata {

double equivalent_square_cm(double width_cm, double length_cm) {
  return 2.0 * width_cm * length_cm / (width_cm + length_cm);
}

double field_at_depth_cm(double field_at_surface_cm, double ssd_cm, double depth_cm) {
  return field_at_surface_cm * (ssd_cm + depth_cm) / ssd_cm;
}

double mayneord_f_factor(double ssd_cm, double table_ssd_cm, double dmax_cm, double depth_cm) {
  const double ratio =
      (ssd_cm + dmax_cm) / (table_ssd_cm + dmax_cm) * (table_ssd_cm + depth_cm) / (ssd_cm + depth_cm);
  return ratio * ratio;
}

namespace {
double inverse_square_to_dmax(double depth_cm, double ssd_cm, double dmax_cm) {
  const double ratio = (ssd_cm + depth_cm) / (ssd_cm + dmax_cm);
  return ratio * ratio;
}

struct DerivedTmrCell {
  double tmr = 0.0;
  bool extrapolated = false;
  std::string how;
};

// TMR at (depth, field at depth) from the PDD and Sp tables: the surface field that diverges to
// that field at the depth, its PDD, and Sp at the depth and at dmax.
DerivedTmrCell derive_tmr_cell(const Table2D& pdd, const Table1D& sp, double pdd_ssd_cm, double dmax_cm,
                               double depth_cm, double field_at_depth) {
  const double surface_field_cm = field_at_depth * pdd_ssd_cm / (pdd_ssd_cm + depth_cm);
  const double field_at_dmax = field_at_depth_cm(surface_field_cm, pdd_ssd_cm, dmax_cm);
  const Lookup p = pdd.at(depth_cm, surface_field_cm);
  const Lookup sp_d = sp.at(field_at_depth);
  const Lookup sp_dm = sp.at(field_at_dmax);
  const bool extrapolated = p.extrapolated() || sp_d.extrapolated() || sp_dm.extrapolated();
  return {tmr_from_pdd(p.value, depth_cm, pdd_ssd_cm, dmax_cm, sp_d.value, sp_dm.value), extrapolated,
          extrapolated ? extrapolation_text({p, sp_d, sp_dm}) : std::string{}};
}
}  // namespace

double tmr_from_pdd(double pdd_percent, double depth_cm, double ssd_cm, double dmax_cm,
                    double sp_at_depth_field, double sp_at_dmax_field) {
  return pdd_percent / 100.0 * inverse_square_to_dmax(depth_cm, ssd_cm, dmax_cm) * sp_at_dmax_field /
         sp_at_depth_field;
}

double pdd_from_tmr(double tmr, double depth_cm, double ssd_cm, double dmax_cm, double sp_at_depth_field,
                    double sp_at_dmax_field) {
  return 100.0 * tmr / inverse_square_to_dmax(depth_cm, ssd_cm, dmax_cm) * sp_at_depth_field /
         sp_at_dmax_field;
}

std::size_t DerivedTable::extrapolated_count() const {
  return static_cast<std::size_t>(std::count(extrapolated.begin(), extrapolated.end(), true));
}

DerivedTable derive_tmr_table(const Table2D& pdd, const Table1D& sp, double pdd_ssd_cm, double dmax_cm,
                              const std::vector<double>& fields_at_depth_cm, const std::string& output_file) {
  std::vector<double> values;
  std::vector<bool> extrapolated;
  std::vector<std::string> how;
  for (const double depth : pdd.rows()) {
    for (const double field : fields_at_depth_cm) {
      DerivedTmrCell cell = derive_tmr_cell(pdd, sp, pdd_ssd_cm, dmax_cm, depth, field);
      values.push_back(cell.tmr);
      extrapolated.push_back(cell.extrapolated);
      how.push_back(std::move(cell.how));
    }
  }
  return DerivedTable{Table2D{output_file, "tmr", pdd.row_axis_name(), pdd.rows(), "field_cm",
                              fields_at_depth_cm, std::move(values)},
                      std::move(extrapolated), std::move(how)};
}

Table2D rescale_pdd_table(const Table2D& pdd, double table_ssd_cm, double new_ssd_cm, double dmax_cm,
                          const std::string& output_file) {
  std::vector<double> values;
  for (std::size_t r = 0; r < pdd.rows().size(); ++r) {
    const double f = mayneord_f_factor(new_ssd_cm, table_ssd_cm, dmax_cm, pdd.rows()[r]);
    for (std::size_t c = 0; c < pdd.columns().size(); ++c) values.push_back(f * pdd.cell(r, c));
  }
  return Table2D{
      output_file,      "pdd", pdd.row_axis_name(), pdd.rows(), pdd.column_axis_name(), pdd.columns(),
      std::move(values)};
}

DerivedTable rescale_pdd_table(const Table2D& pdd, double table_ssd_cm, double new_ssd_cm, double dmax_cm,
                               const std::vector<double>& depths_cm, const std::vector<double>& fields_cm,
                               const std::string& output_file) {
  std::vector<double> values;
  std::vector<bool> extrapolated;
  std::vector<std::string> how;
  for (const double depth : depths_cm) {
    const double f = mayneord_f_factor(new_ssd_cm, table_ssd_cm, dmax_cm, depth);
    for (const double field : fields_cm) {
      const Lookup p = pdd.at(depth, field);
      values.push_back(f * p.value);
      extrapolated.push_back(p.extrapolated());
      how.push_back(p.extrapolated() ? extrapolation_text({p}) : std::string{});
    }
  }
  return DerivedTable{Table2D{output_file, "pdd", pdd.row_axis_name(), depths_cm, pdd.column_axis_name(),
                              fields_cm, std::move(values)},
                      std::move(extrapolated), std::move(how)};
}

std::string extrapolation_text(const std::vector<Lookup>& lookups) {
  std::string text;
  for (const Lookup& l : lookups) {
    for (const AxisBracket& a : l.axes) {
      if (!a.extrapolated) continue;
      const double end = a.query < a.lower_node ? a.lower_node : a.upper_node;
      std::ostringstream part;
      part << l.quantity << ' ' << a.axis << ' ' << a.query << " beyond the table's end node " << end;
      text += (text.empty() ? "" : "; ") + part.str();
    }
  }
  return text;
}

std::vector<TmrComparison> compare_tmr(const Table2D& measured_tmr, const Table2D& pdd, const Table1D& sp,
                                       double pdd_ssd_cm, double dmax_cm, double min_depth_cm) {
  std::vector<TmrComparison> result;
  for (std::size_t r = 0; r < measured_tmr.rows().size(); ++r) {
    const double depth = measured_tmr.rows()[r];
    if (depth < min_depth_cm) continue;
    for (std::size_t c = 0; c < measured_tmr.columns().size(); ++c) {
      const double field = measured_tmr.columns()[c];
      const DerivedTmrCell derived = derive_tmr_cell(pdd, sp, pdd_ssd_cm, dmax_cm, depth, field);
      TmrComparison comparison;
      comparison.row_index = r;
      comparison.column_index = c;
      comparison.depth_cm = depth;
      comparison.field_at_depth_cm = field;
      comparison.measured_tmr = measured_tmr.cell(r, c);
      comparison.derived_tmr = derived.tmr;
      comparison.difference_percent = 100.0 * (comparison.measured_tmr - derived.tmr) / derived.tmr;
      comparison.extrapolated = derived.extrapolated;
      result.push_back(comparison);
    }
  }
  return result;
}

}  // namespace countersign::beamdata
