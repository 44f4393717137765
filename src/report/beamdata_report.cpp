#include <countersign/report/beamdata_report.hpp>

#include <countersign/report/html_escape.hpp>
#include <countersign/report/html_report.hpp>
#include <countersign/util/version.hpp>

#include "beamdata_plots.hpp"
#include "html_parts.hpp"

#include <fmt/format.h>

#include <fstream>

namespace countersign::report {

namespace bd = countersign::beamdata;

namespace {

std::string optional_number(const std::optional<double>& value, std::string_view unit) {
  return value ? fmt::format("{:g}{}", *value, unit) : std::string{"not given (not assumed)"};
}

std::string row(std::string_view label, const std::string& value_html) {
  return fmt::format("<tr><th>{}</th><td>{}</td></tr>\n", html_escape(label), value_html);
}

std::string findings_section(const bd::ValidationReport& report) {
  std::string out = "<h2>Validation findings</h2>\n";
  if (report.problems.empty()) return out + "<p>No problems found.</p>\n";
  const auto groups = bd::group_problems(report.problems);
  for (const auto severity : {bd::Severity::error, bd::Severity::warning}) {
    std::string items;
    for (const auto& g : groups)
      if (g.severity() == severity) items += "<li>" + html_escape(g.text()) + "</li>\n";
    if (items.empty()) continue;
    out += fmt::format("<h3>{}</h3>\n<ul class=\"findings\">\n{}</ul>\n",
                       severity == bd::Severity::error ? "Errors (the calculation refuses the library)"
                                                       : "Warnings (suspicious but valid: review)",
                       items);
  }
  return out;
}

std::string photon_keys(const bd::BeamData& b) {
  const bd::Calibration& c = b.calibration;
  std::string geometry = std::string{bd::to_string(c.geometry)} +
                         (c.geometry_defaulted() ? " (by the default rule)" : " (stated)");
  std::string out = "<table class=\"identity\">\n";
  out += row("Energy", fmt::format("{:g} MV photons", b.energy_mv));
  out += row("dmax, PDD SSD", fmt::format("{:g} cm, {:g} cm", b.dmax_cm, b.pdd_ssd_cm));
  out += row("Calibration",
             html_escape(fmt::format("{:g} cGy/MU, field {:g} cm, SSD {:g} cm, depth {:g} cm, geometry {}",
                                     c.output_cgy_per_mu, c.field_cm, c.ssd_cm, c.depth_cm, geometry)));
  out += row("MLC transmission", html_escape(optional_number(b.mlc_transmission, "")));
  out += row("MLC leaf-end offset", html_escape(optional_number(b.mlc_leaf_end_offset_mm, " mm")));
  out += row("Head scatter field",
             html_escape(std::string{bd::to_string(b.head_scatter_field_in_force())} +
                         (b.head_scatter_field ? " (stated)" : " (the format's default)")));
  out += row("SSD range", html_escape(b.ssd_range_cm ? fmt::format("{:g} to {:g} cm", b.ssd_range_cm->min_cm,
                                                                   b.ssd_range_cm->max_cm)
                                                     : std::string{"not given (not assumed)"}));
  out += row("Block transmission", html_escape(optional_number(b.block_transmission, "")));
  std::string accessories;
  for (const auto& w : b.wedges)
    accessories += fmt::format("{} ({:g}°, {}, {}{}); ", w.id, w.angle_deg,
                               w.kind == bd::WedgeKind::dynamic ? "dynamic" : "physical",
                               w.factor ? fmt::format("factor {:g}", *w.factor) : std::string{"factor table"},
                               w.orientation_table ? ", orientation table" : "");
  for (const auto& t : b.trays) accessories += fmt::format("tray {} (factor {:g}); ", t.id, t.factor);
  out += row("Wedges and trays", html_escape(accessories.empty() ? "none" : accessories));
  return out + "</table>\n";
}

std::string photon_section(const bd::Machine& m, const bd::BeamData& b, const std::string& folder) {
  std::string out = fmt::format("<h3>Beam {} ({})</h3>\n", html_escape(b.id), html_escape(m.name));
  out += photon_keys(b);
  const auto name = [&](const std::string& file) { return folder + "/" + file; };
  const auto add2 = [&](const bd::Table2D& t, const std::string& title) {
    if (!t.rows().empty()) out += beamdata_plots::table_plot(t, name(t.file()), b.id + ": " + title);
  };
  const auto add1 = [&](const bd::Table1D& t, const std::string& title) {
    if (!t.axis().empty()) out += beamdata_plots::table_plot(t, name(t.file()), b.id + ": " + title);
  };
  add2(b.pdd, "percent depth dose (" + b.pdd.file() + ")");
  add2(b.tmr, "tissue-maximum ratio (" + b.tmr.file() + ")");
  add1(b.sc, "collimator scatter factor Sc (" + b.sc.file() + ")");
  add1(b.sp, "phantom scatter factor Sp (" + b.sp.file() + ")");
  if (b.oar) add2(*b.oar, "off-axis ratio (" + b.oar->file() + ")");
  for (const auto& w : b.wedges) {
    if (w.table) add2(*w.table, "wedge " + w.id + " factor (" + w.table->file() + ")");
    if (w.orientation_table)
      add2(*w.orientation_table,
           "wedge " + w.id + " wedged off-axis ratio (" + w.orientation_table->file() + ")");
  }
  std::size_t outside = 0;
  out += "<h3>" + html_escape(b.id) + ": PDD&#8596;TMR consistency</h3>\n";
  const std::string plots = beamdata_plots::consistency_plots(b, name(b.tmr.file()), outside);
  out += fmt::format(
      "<p>Measured TMR against TMR derived from the PDD and Sp (AAPM TG-71 relation), depths from dmax; "
      "{} node(s) beyond ±{:g} % are circled.</p>\n",
      outside, bd::consistency_tolerance_percent);
  return out + plots;
}

std::string electron_section(const bd::Machine& m, const bd::ElectronBeamData& b, const std::string& folder) {
  std::string out = fmt::format("<h3>Beam {} ({}, {:g} MeV electrons)</h3>\n", html_escape(b.id),
                                html_escape(m.name), b.energy_mev);
  out += fmt::format(
      "<p>dmax {:g} cm, standard SSD {:g} cm; calibration {:g} cGy/MU with applicator {} at SSD {:g} cm, "
      "depth {:g} cm.</p>\n",
      b.dmax_cm, b.pdd_ssd_cm, b.calibration.output_cgy_per_mu, html_escape(b.calibration.applicator),
      b.calibration.ssd_cm, b.calibration.depth_cm);
  for (const auto& a : b.applicators) {
    out += fmt::format("<p>Applicator {}: field {:g} cm, factor {:g}, effective SSD {:g} cm.</p>\n",
                       html_escape(a.id), a.field_cm, a.factor, a.effective_ssd_cm);
    if (!a.pdd.rows().empty())
      out += beamdata_plots::table_plot(a.pdd, folder + "/" + a.pdd.file(),
                                        b.id + " " + a.id + ": percent depth dose (" + a.pdd.file() + ")");
    if (a.cutout && !a.cutout->axis().empty())
      out += beamdata_plots::table_plot(*a.cutout, folder + "/" + a.cutout->file(),
                                        b.id + " " + a.id + ": cutout factor (" + a.cutout->file() + ")");
  }
  return out;
}

std::string machines_section(const bd::Library& library) {
  std::string out;
  for (const auto& m : library.machines) {
    const std::string folder = m.manifest.parent_path().filename().string();
    out +=
        fmt::format("<h2 class=\"machine\">Machine {}</h2>\n", html_escape(m.name.empty() ? folder : m.name));
    if (!m.aliases.empty()) {
      std::string aliases;
      for (const auto& a : m.aliases) aliases += (aliases.empty() ? "" : ", ") + a;
      out += "<p>Also answers to: " + html_escape(aliases) + " (exact, case-sensitive).</p>\n";
    }
    out += fmt::format("<p>SAD {:g} cm; manifest {}.</p>\n", m.sad_cm, html_escape(m.manifest.string()));
    for (const auto& b : m.beams) out += photon_section(m, b, folder);
    for (const auto& e : m.electron_beams) out += electron_section(m, e, folder);
  }
  if (!library.ct.empty()) {
    out += "<h2>CT number to relative electron density</h2>\n";
    for (const auto& t : library.ct.tables) out += beamdata_plots::ct_plot(t);
  }
  return out;
}

std::string summary(const bd::ValidationReport& report, const std::filesystem::path& folder) {
  std::string out = "<table class=\"identity\">\n";
  out += row("Library", "<span class=\"mono\">" + html_escape(folder.string()) + "</span>");
  out += row("SHA-256", "<span class=\"mono\">" +
                            html_escape(report.sha256_hex.empty() ? "not available" : report.sha256_hex) +
                            "</span>");
  out += row("Machines", html_escape(report.readable.machine_listing()));
  out += row("Beams", std::to_string(report.beam_count));
  out += row("PDD/TMR consistency",
             fmt::format("{} TMR node(s) compared within {:g} %, {} not compared (would need extrapolation)",
                         report.consistency_nodes_compared, bd::consistency_tolerance_percent,
                         report.consistency_nodes_skipped));
  out += "</table>\n";
  const bool clean = report.problems.empty();
  const std::string word = report.error_count() > 0 ? "Refused" : clean ? "Clean" : "Usable, with warnings";
  out += fmt::format(
      "<div class=\"outcome {}\"><span class=\"word\">{}</span><br>{} error(s), {} warning(s).</div>\n",
      report.error_count() > 0 ? "outside"
      : clean                  ? "within"
                               : "not-checked",
      word, report.error_count(), report.warning_count());
  return out;
}

}  // namespace

std::string beamdata_report_html(const bd::ValidationReport& report,
                                 const std::filesystem::path& library_folder,
                                 const BeamdataReportOptions& options) {
  const std::string when = options.generated_at.empty() ? local_timestamp() : options.generated_at;
  std::string page = "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n";
  // No network: nothing on this page may fetch anything.
  page +=
      "<meta http-equiv=\"Content-Security-Policy\" content=\"default-src 'none'; style-src 'unsafe-inline'; "
      "img-src data:\">\n";
  page += "<title>Beam-data review " + html_escape(library_folder.filename().string()) + "</title>\n";
  page +=
      "<style>" + std::string(html::style_sheet()) +
      "svg.table-plot, svg.consistency-plot { display: block; width: 100%; height: auto; margin: 2mm 0 4mm; "
      "break-inside: avoid; } h2.machine { break-before: page; }</style>\n</head>\n<body>\n";
  page += fmt::format(
      "<div class=\"masthead\"><div><h1>Beam-data review</h1><div class=\"sub\">for commissioning "
      "and sign-off</div></div><div class=\"stamp\">countersign {}<br>{}</div></div>\n",
      html_escape(version_string), html_escape(when));
  page += summary(report, library_folder);
  page += findings_section(report);
  page += machines_section(report.readable);
  page += "<h2>Sign-off</h2>\n<table class=\"identity\">\n" + row("Reviewed by", "") + row("Date", "") +
          row("Signature", "") + "</table>\n";
  page += fmt::format("<div class=\"caution\"><strong>Caution.</strong> {}</div>\n</body>\n</html>\n",
                      html_escape(caution_text()));
  return page;
}

Expected<std::filesystem::path> write_beamdata_report(const bd::ValidationReport& report,
                                                      const std::filesystem::path& library_folder,
                                                      const std::filesystem::path& html_file,
                                                      const BeamdataReportOptions& options) {
  const std::string page = beamdata_report_html(report, library_folder, options);
  std::filesystem::path temporary = html_file;
  temporary += ".partial";
  {
    std::ofstream out(temporary, std::ios::binary | std::ios::trunc);
    out.write(page.data(), static_cast<std::streamsize>(page.size()));
    out.close();
    if (!out)
      return Error{ErrorKind::io, html_file.string(), "", "", "cannot write the beam-data review page"};
  }
  std::error_code ec;
  std::filesystem::rename(temporary, html_file, ec);
  if (ec) {
    std::filesystem::remove(temporary, ec);
    return Error{ErrorKind::io, html_file.string(), "", "",
                 "cannot move the beam-data review page into place"};
  }
  return html_file;
}

}  // namespace countersign::report
