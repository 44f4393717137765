#include "beamdata_plots.hpp"

#include "svg_plot.hpp"

#include <countersign/beamdata/conversions.hpp>
#include <countersign/beamdata/validation.hpp>
#include <countersign/report/html_escape.hpp>

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <set>

namespace countersign::report::beamdata_plots {

namespace bd = countersign::beamdata;

namespace {

std::string axis_label(const std::string& axis) {
  if (axis == "depth_cm") return "depth (cm)";
  if (axis == "field_cm") return "square field side (cm)";
  if (axis == "off_axis_cm") return "off-axis distance at the isocentre plane (cm)";
  if (axis == "wedge_axis_cm") return "distance along the wedge gradient (cm), thin end negative";
  if (axis == "hu") return "CT number (HU)";
  return axis;
}

std::string curve_label(const std::string& axis, double value) {
  if (axis == "field_cm") return fmt::format("field {:g} cm", value);
  if (axis == "depth_cm") return fmt::format("depth {:g} cm", value);
  return fmt::format("{} {:g}", axis, value);
}

}  // namespace

std::string table_plot(const bd::Table2D& t, const std::string& name, const std::string& title) {
  svg::Plot plot{"table-plot", name, title, "", t.quantity(), {}, {}, std::nullopt};
  // Depth-dose families: one curve per field along depth; profiles: one curve per depth.
  const bool per_column = t.column_axis_name() == "field_cm";
  plot.x_label = axis_label(per_column ? t.row_axis_name() : t.column_axis_name());
  const std::size_t curves = per_column ? t.columns().size() : t.rows().size();
  for (std::size_t k = 0; k < curves; ++k) {
    svg::Series s;
    s.label = per_column ? curve_label(t.column_axis_name(), t.columns()[k])
                         : curve_label(t.row_axis_name(), t.rows()[k]);
    s.x = per_column ? t.rows() : t.columns();
    for (std::size_t i = 0; i < s.x.size(); ++i) s.y.push_back(per_column ? t.cell(i, k) : t.cell(k, i));
    plot.series.push_back(std::move(s));
  }
  return svg::render(plot);
}

std::string table_plot(const bd::Table1D& t, const std::string& name, const std::string& title) {
  svg::Plot plot{"table-plot", name, title, axis_label(t.axis_name()), t.quantity(), {}, {}, std::nullopt};
  plot.series.push_back(svg::Series{t.quantity(), t.axis(), t.values(), false, std::nullopt});
  return svg::render(plot);
}

std::string ct_plot(const bd::CtDensityTable& table) {
  const std::string which = table.station.empty() ? "default table" : "station " + table.station;
  svg::Plot plot{"table-plot",
                 table.file,
                 "CT number to relative electron density (" + which + ")",
                 axis_label("hu"),
                 "relative electron density",
                 {},
                 {},
                 std::nullopt};
  plot.series.push_back(svg::Series{"relative electron density", table.hu, table.relative_electron_density,
                                    false, std::nullopt});
  return svg::render(plot);
}

std::string consistency_plots(const bd::BeamData& beam, const std::string& name, std::size_t& nodes_outside) {
  nodes_outside = 0;
  if (beam.pdd.rows().empty() || beam.tmr.rows().empty() || beam.sp.axis().empty() || !(beam.dmax_cm > 0.0) ||
      !(beam.pdd_ssd_cm > 0.0))
    return "<p>No PDD&#8596;TMR overlay: the beam's PDD, TMR or Sp table, dmax or PDD SSD could not be "
           "read.</p>\n";
  const auto comparisons =
      bd::compare_tmr(beam.tmr, beam.pdd, beam.sp, beam.pdd_ssd_cm, beam.dmax_cm, beam.dmax_cm);
  // Up to five fields drawn: the smallest, about 5, 10 and 20 cm, and the largest.
  const auto& fields = beam.tmr.columns();
  std::set<std::size_t> drawn;
  for (const double wanted : {fields.front(), 5.0, 10.0, 20.0, fields.back()}) {
    const auto closest = std::min_element(fields.begin(), fields.end(), [&](double a, double b) {
      return std::abs(a - wanted) < std::abs(b - wanted);
    });
    drawn.insert(static_cast<std::size_t>(std::distance(fields.begin(), closest)));
  }
  const double tolerance = bd::consistency_tolerance_percent;
  svg::Plot overlay{"consistency-plot",
                    name,
                    beam.id + ": measured TMR (solid) and TMR derived from PDD and Sp (dashed)",
                    "depth (cm)",
                    "TMR",
                    {},
                    {},
                    std::nullopt};
  svg::Plot difference{"consistency-plot",
                       name,
                       beam.id + fmt::format(": measured minus derived TMR (%), band ±{:g} %", tolerance),
                       "depth (cm)",
                       "difference (%)",
                       {},
                       {},
                       std::pair{-tolerance, tolerance}};
  std::size_t style = 0;
  for (const std::size_t c : drawn) {
    svg::Series measured{fmt::format("{:g} cm measured", fields[c]), {}, {}, false, style};
    svg::Series derived{fmt::format("{:g} cm derived", fields[c]), {}, {}, true, style};
    svg::Series diff{fmt::format("field {:g} cm", fields[c]), {}, {}, false, style};
    for (const auto& n : comparisons) {
      if (n.column_index != c || n.extrapolated) continue;
      measured.x.push_back(n.depth_cm);
      measured.y.push_back(n.measured_tmr);
      derived.x.push_back(n.depth_cm);
      derived.y.push_back(n.derived_tmr);
      diff.x.push_back(n.depth_cm);
      diff.y.push_back(n.difference_percent);
    }
    overlay.series.push_back(std::move(measured));
    overlay.series.push_back(std::move(derived));
    difference.series.push_back(std::move(diff));
    ++style;
  }
  // Every node beyond tolerance is marked, whether its field is drawn or not.
  for (const auto& n : comparisons) {
    if (n.extrapolated || std::abs(n.difference_percent) <= tolerance) continue;
    ++nodes_outside;
    const std::string label = fmt::format("depth {:g} cm, field {:g} cm: {:+.2f} %", n.depth_cm,
                                          n.field_at_depth_cm, n.difference_percent);
    overlay.markers.push_back({n.depth_cm, n.measured_tmr, label});
    difference.markers.push_back({n.depth_cm, n.difference_percent, label});
  }
  return svg::render(overlay) + svg::render(difference);
}

}  // namespace countersign::report::beamdata_plots
