#include <countersign/report/factor_rows.hpp>

#include <fmt/format.h>

namespace countersign::report {

namespace {

// The electron form (engine/electron_dose.hpp): the cutout and the OAR are always shown (a value of
// 1 for an open applicator or on the axis is itself a statement).
std::vector<FactorRow> electron_rows(const engine::DoseFactors& f) {
  return {{"calibration_depth", "Calibration-depth term PDD_ref(d_cal)/100", "divides", &f.calibration_depth},
          {"applicator", "Applicator (cone) factor", "multiplies", &f.applicator},
          {"cutout", "Cutout factor CF(cutout)", "multiplies", &f.cutout},
          {"pdd", "Percent depth dose PDD(d, cutout)/100 at the tables' SSD", "multiplies", &f.pdd},
          {"oar", "Off-axis ratio (central axis)", "multiplies", &f.oar},
          {"inverse_square", "Inverse square ((SSD_eff + d_m)/(SSD_eff + g + d_m))^2", "multiplies",
           &f.inverse_square}};
}

}  // namespace

std::vector<FactorRow> factor_rows(const engine::PointDose& dose, FactorSelection selection) {
  const engine::DoseFactors& f = dose.factors;
  if (dose.method == engine::Method::electron) return electron_rows(f);
  const bool tmr = dose.method == engine::Method::tmr;
  std::vector<FactorRow> rows;
  const auto add = [&](const char* key, const char* name, const char* role, const engine::Factor& factor) {
    if (selection == FactorSelection::used && factor.basis == engine::FactorBasis::not_applicable) return;
    rows.push_back({key, name, role, &factor});
  };
  add("calibration_depth",
      tmr ? "Calibration-depth term TMR(d_c, s_ref)" : "Calibration-depth term PDD(d_c, s_ref)/100 x F",
      "divides", f.calibration_depth);
  add("calibration_sc", "Reference collimator scatter Sc(s_c,ref)", "divides", f.calibration_sc);
  add("calibration_sp",
      tmr ? "Reference phantom scatter Sp(s_ref)" : "Reference phantom scatter Sp(s_ref,d0)", "divides",
      f.calibration_sp);
  add("sc", "Collimator scatter Sc(s_c)", "multiplies", f.sc);
  add("sp", tmr ? "Phantom scatter Sp(s_d)" : "Phantom scatter Sp(s_d0)", "multiplies", f.sp);
  if (tmr || selection == FactorSelection::all_factors)
    add("tmr", "Tissue-maximum ratio TMR(d, s_d)", "multiplies", f.tmr);
  if (!tmr || selection == FactorSelection::all_factors) {
    add("pdd", "Percent depth dose PDD(d, s_s)/100 at the table SSD", "multiplies", f.pdd);
    add("mayneord_f", "Mayneord F factor", "multiplies", f.mayneord_f);
  }
  // The OAR is always shown: a value of 1 on the axis is itself a statement.
  rows.push_back({"oar", "Off-axis ratio OAR(d, r)", "multiplies", &f.oar});
  add("wedge", "Wedge factor", "multiplies", f.wedge);
  add("wedge_profile", "Wedged off-axis ratio along the gradient", "multiplies", f.wedge_profile);
  add("tray", "Tray factor", "multiplies", f.tray);
  add("transmission", "MLC transmission", "multiplies", f.transmission);
  add("inverse_square",
      tmr ? "Inverse square (SCD_ref/SPD)^2" : "Inverse square ((SSD_ref + d0)/(SSD + d0))^2", "multiplies",
      f.inverse_square);
  return rows;
}

std::string describe_lookup(const beamdata::Lookup& lookup) {
  std::string text;
  for (const beamdata::AxisBracket& a : lookup.axes) {
    if (!text.empty()) text += "; ";
    if (a.lower_index == a.upper_index) {
      text += fmt::format("{} {:.2f} at node {:g}", a.axis, a.query, a.lower_node);
    } else {
      text += fmt::format("{} {:.2f} between {:g} and {:g} (weight {:.3f} on {:g})", a.axis, a.query,
                          a.lower_node, a.upper_node, a.upper_weight, a.upper_node);
    }
    if (a.extrapolated) text += " OUTSIDE THE TABLE";
  }
  return text;
}

std::string describe_basis(const engine::Factor& factor) {
  switch (factor.basis) {
    case engine::FactorBasis::table:
      return factor.lookup ? fmt::format("table {}", factor.lookup->table_file) : std::string{"table"};
    case engine::FactorBasis::manifest_constant:
      return "constant from machine.toml";
    case engine::FactorBasis::formula:
      return "computed from distances";
    case engine::FactorBasis::not_applicable:
      return "not part of this beam or formalism";
    case engine::FactorBasis::on_axis_unity:
      return "1: point on the central axis, no OAR table";
  }
  return "";
}

}  // namespace countersign::report
