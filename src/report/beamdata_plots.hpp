#pragma once

// The plots of the beam-data review page (private to the report module).

#include <countersign/beamdata/library.hpp>

#include <string>

namespace countersign::report::beamdata_plots {

// One "table-plot" SVG per table; `name` is the data-table attribute ("FERN-LINAC-1/6X/pdd.csv").
[[nodiscard]] std::string table_plot(const beamdata::Table2D& table, const std::string& name,
                                     const std::string& title);
[[nodiscard]] std::string table_plot(const beamdata::Table1D& table, const std::string& name,
                                     const std::string& title);
[[nodiscard]] std::string ct_plot(const beamdata::CtDensityTable& table);

// Measured TMR against TMR derived from the PDD and Sp, with differences beyond the tolerance
// marked, and the differences themselves against depth: two "consistency-plot" SVGs, or a sentence
// saying why there is no overlay. `nodes_outside` counts the marked nodes.
[[nodiscard]] std::string consistency_plots(const beamdata::BeamData& beam, const std::string& name,
                                            std::size_t& nodes_outside);

}  // namespace countersign::report::beamdata_plots
