// Resampling scattered measured points onto a table's grid: first along each measured curve, then
// across curves. A cell is filled only by interpolation within the stated gap limits.

#include "import_steps.hpp"
#include "table_checks.hpp"

#include <algorithm>
#include <cmath>
#include <map>

namespace countersign::beamdata::detail {

namespace {

struct CurveOnGrid {
  double key = 0.0;                     // the curve's fixed coordinate
  std::vector<ResampledValue> at_node;  // one per along-axis grid node
  std::string problem;                  // set when the whole curve is unusable (normalisation)
};

// Along one measured curve at every grid node; a profile to be folded is read at +x and -x and
// the two halves averaged (either half alone where the other was not measured).
std::vector<ResampledValue> along_curve(const std::vector<std::pair<double, double>>& points,
                                        const std::vector<double>& nodes, const GridRequest& r) {
  const Curve curve(points);
  std::vector<ResampledValue> out;
  for (const double x : nodes) {
    ResampledValue a = resample(curve, x, r.method, r.max_gap_along_cm);
    if (r.fold_mirror) {
      const ResampledValue b = resample(curve, -x, r.method, r.max_gap_along_cm);
      if (a.ok() && b.ok()) a.value = 0.5 * (a.value + b.value);
      if (!a.ok()) a = b;
    }
    out.push_back(a);
  }
  return out;
}

std::string cell_name(const GridRequest& r, double row, double column) {
  return r.quantity + " at " + r.row_axis + " " + number_text(row) + ", " + r.column_axis + " " +
         number_text(column);
}

void cell_problem(std::vector<Problem>& problems, const std::string& file, const GridRequest& r, double row,
                  double column, const std::string& reason, const std::string& rule) {
  problems.push_back(Problem{file, std::nullopt, std::nullopt, std::nullopt, r.quantity,
                             cell_name(r, row, column) + ": " + reason, Severity::error, rule});
}

std::string refusal_rule(const ResampledValue& v) {
  return v.refusal == ResampleRefusal::gap_too_wide
             ? "a gap between measured points is wider than the limit"
             : "the cell lies outside the measured range (no extrapolation)";
}

}  // namespace

std::vector<double> resample_grid(const std::vector<Sample>& samples, const GridRequest& r,
                                  const std::string& file, std::vector<Problem>& problems) {
  const bool along_rows = r.run == CurvesRun::along_rows;
  const std::vector<double>& along_nodes = along_rows ? r.rows : r.columns;
  const std::vector<double>& across_nodes = along_rows ? r.columns : r.rows;
  const std::string& along_axis = along_rows ? r.row_axis : r.column_axis;
  const std::string& across_axis = along_rows ? r.column_axis : r.row_axis;

  std::map<double, std::vector<std::pair<double, double>>> curves;
  for (const Sample& s : samples) {
    curves[along_rows ? s.column : s.row].emplace_back(along_rows ? s.row : s.column, s.value);
  }
  std::vector<CurveOnGrid> on_grid;
  for (const auto& [key, points] : curves) {
    CurveOnGrid c{key, along_curve(points, along_nodes, r), {}};
    if (r.normalisation) {
      const ResampledValue norm = along_curve(points, {r.normalisation->at}, r).front();
      if (!norm.ok() || norm.value == 0.0) {
        c.problem = "cannot normalise at " + along_axis + " " + number_text(r.normalisation->at) + ": " +
                    (norm.ok() ? std::string{"the value there is 0"} : norm.reason(r.max_gap_along_cm));
      } else {
        for (auto& v : c.at_node) v.value *= r.normalisation->to / norm.value;
      }
    }
    if (!c.problem.empty())
      problems.push_back(
          Problem{file, std::nullopt, std::nullopt, std::nullopt, r.quantity,
                  r.quantity + " curve at " + across_axis + " " + number_text(key) + ": " + c.problem,
                  Severity::error, "measured curve cannot be normalised"});
    on_grid.push_back(std::move(c));
  }

  std::vector<double> values(r.rows.size() * r.columns.size(), std::nan(""));
  for (std::size_t i = 0; i < along_nodes.size(); ++i) {
    std::vector<std::pair<double, double>> across_points;
    for (const auto& c : on_grid) {
      if (c.problem.empty() && c.at_node[i].ok()) across_points.emplace_back(c.key, c.at_node[i].value);
    }
    const Curve across(across_points);
    for (std::size_t j = 0; j < across_nodes.size(); ++j) {
      const double row = along_rows ? along_nodes[i] : across_nodes[j];
      const double column = along_rows ? across_nodes[j] : along_nodes[i];
      // A measured curve exactly at this node that failed along its own axis explains the cell.
      const auto own = std::find_if(on_grid.begin(), on_grid.end(),
                                    [&](const CurveOnGrid& c) { return c.key == across_nodes[j]; });
      if (own != on_grid.end() && own->problem.empty() && !own->at_node[i].ok()) {
        cell_problem(problems, file, r, row, column,
                     "along " + along_axis + ", " + own->at_node[i].reason(r.max_gap_along_cm),
                     refusal_rule(own->at_node[i]));
        continue;
      }
      if (own != on_grid.end() && !own->problem.empty()) continue;  // reported once for the curve
      const ResampledValue v = resample(across, across_nodes[j], r.method, r.max_gap_across_cm);
      if (!v.ok()) {
        cell_problem(problems, file, r, row, column,
                     "across " + across_axis + ", " + v.reason(r.max_gap_across_cm), refusal_rule(v));
        continue;
      }
      values[along_rows ? i * r.columns.size() + j : j * r.columns.size() + i] = v.value;
    }
  }
  return values;
}

std::vector<double> resample_factor(const std::vector<std::pair<double, double>>& points,
                                    const std::vector<double>& axis, double normalise_at,
                                    ResamplingMethod method, double max_gap_cm, const std::string& quantity,
                                    const std::string& file, std::vector<Problem>& problems) {
  const Curve curve(points);
  const ResampledValue norm = resample(curve, normalise_at, method, max_gap_cm);
  if (!norm.ok() || norm.value == 0.0) {
    problems.push_back(
        Problem{file, std::nullopt, std::nullopt, std::nullopt, quantity,
                "cannot normalise at field_cm " + number_text(normalise_at) + ": " +
                    (norm.ok() ? std::string{"the value there is 0"} : norm.reason(max_gap_cm))});
    return {};
  }
  std::vector<double> values;
  for (const double x : axis) {
    const ResampledValue v = resample(curve, x, method, max_gap_cm);
    if (!v.ok()) {
      problems.push_back(Problem{file, std::nullopt, std::nullopt, std::nullopt, quantity,
                                 quantity + " at field_cm " + number_text(x) + ": " + v.reason(max_gap_cm),
                                 Severity::error, refusal_rule(v)});
    }
    values.push_back(v.value / norm.value);
  }
  return values;
}

}  // namespace countersign::beamdata::detail
