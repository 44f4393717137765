#include "template_text.hpp"

#include <cctype>
#include <sstream>

namespace countersign::beamdata::detail {

namespace {

std::string lower(std::string s) {
  for (auto& c : s) c = static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
  return s;
}

void beam_section(std::ostream& out, double energy_mv, const std::vector<std::string>& wedges) {
  const std::string id = template_beam_id(energy_mv);
  out << "\n[[beam]]\n"
      << "id = \"" << id << "\"                 # free text, shown in reports; unique in this manifest\n"
      << "radiation = \"PHOTON\"        # compared with Radiation Type (300A,00C6)\n"
      << "energy_mv = " << energy_mv
      << "              # compared with Nominal Beam Energy (300A,0114), control point 0\n"
      << "dmax_cm = nan               # depth of maximum dose of the 10 x 10 field (cm)\n"
      << "pdd_ssd_cm = nan            # the SSD at which pdd.csv was measured (cm)\n"
      << "# Optional keys: absent means \"not known\", and whatever needs the value is not checked.\n"
      << "# mlc_transmission = nan        # fraction of the open-field dose under closed leaves (leaf and "
         "inter-leaf)\n"
      << "# mlc_leaf_end_offset_mm = nan  # rounded leaf ends: effective tip this far beyond the nominal "
         "position\n"
      << "# head_scatter_field = \"jaws\"   # opening that sets Sc: \"jaws\" (the default) or "
         "\"jaws_and_mlc\"\n"
      << "# ssd_range_cm = [nan, nan]     # SSDs at which this beam's data is trusted; outside: not checked\n"
      << "# block_transmission = nan      # for blocks whose plan gives no Block Transmission (300A,0102)\n"
      << "\n[beam.calibration]          # the calibration point\n"
      << "output_cgy_per_mu = nan     # dose per MU there (cGy/MU)\n"
      << "field_cm = nan              # reference square field side (cm)\n"
      << "ssd_cm = nan                # (cm)\n"
      << "depth_cm = nan              # d0 (cm); source-to-calibration-point distance = ssd_cm + depth_cm\n"
      << "# geometry = \"SSD\"          # \"SSD\": field_cm at the surface; \"SAD\": field_cm at the point. "
         "Absent:\n"
      << "                            # SSD when ssd_cm + depth_cm differs from sad_cm, else SAD (stated in "
         "results)\n"
      << "\n[beam.tables]               # paths relative to this file; they must stay inside this folder\n"
      << "pdd = \"" << id
      << "/pdd.csv\"          # percent depth dose: depth_cm x square field side at the surface\n"
      << "tmr = \"" << id
      << "/tmr.csv\"          # tissue-maximum ratio: depth_cm x square field side at depth\n"
      << "sc = \"" << id
      << "/sc.csv\"            # collimator scatter factor vs collimator field at the isocentre\n"
      << "sp = \"" << id << "/sp.csv\"            # phantom scatter factor vs field in the phantom\n"
      << "oar = \"" << id
      << "/oar.csv\"          # off-axis ratio: depth_cm x off-axis distance at the isocentre (cm)\n";
  for (const auto& wedge : wedges) {
    out << "\n[[beam.wedge]]\n"
        << "id = \"" << wedge << "\"                # compared with Wedge ID (300A,00D4)\n"
        << "angle_deg = nan             # nominal wedge angle\n"
        << "kind = \"?\"                  # \"PHYSICAL\" or \"DYNAMIC\"\n"
        << "factor = nan                # a constant wedge factor, or instead a table:\n"
        << "# table = \"" << id << "/wf_" << lower(wedge)
        << ".csv\"   # depth_cm x equivalent square of the irradiated field at the isocentre plane (cm)\n"
        << "# orientation_table = \"" << id << "/" << lower(wedge)
        << "_profile.csv\"  # optional: wedged off-axis ratio, depth_cm x signed\n"
        << "#                 distance along the wedge gradient at the isocentre plane (cm), thin end "
           "negative\n";
  }
  out << "\n# [[beam.tray]]            # one block per tray\n"
      << "# id = \"?\"                 # compared with Block Tray ID (300A,00F5)\n"
      << "# factor = nan             # tray transmission factor\n";
}

}  // namespace

std::string template_manifest(const TemplateRequest& request) {
  std::ostringstream out;
  out << "# Beam-data library of machine \"" << request.machine
      << "\": TEMPLATE written by countersign beamdata new.\n"
      << "# Fill in every value written as nan or \"?\" and every empty table cell (by hand or with\n"
      << "# `countersign beamdata import`); `countersign beamdata validate` lists what is still missing.\n"
      << "# The format is described in countersign's beamdata/FORMAT.md; README.md here says what to "
         "measure.\n\n"
      << "machine = \"" << request.machine
      << "\"     # compared with Treatment Machine Name (300A,00B2): exact, case-sensitive\n"
      << "# aliases = [\"?\"]             # optional: other exact names the planning system uses for this "
         "machine\n"
      << "sad_cm = nan                # source-axis distance (cm)\n";
  for (const double energy : request.photon_energies_mv) beam_section(out, energy, request.wedges);
  return out.str();
}

std::string template_readme(const TemplateRequest& request) {
  std::ostringstream out;
  out << "# Beam data of " << request.machine << " (template)\n\n"
      << "Written by `countersign beamdata new`. Every number here is for this clinic to measure and "
         "review;\n"
      << "nothing has been filled in for you. `countersign beamdata validate <library>` lists every value "
         "and\n"
      << "cell still missing; `countersign beamdata report <library> --html FILE` plots every table for "
         "review.\n\n"
      << "## What to measure, and how countersign uses it\n\n"
      << "| table | measure | used for |\n|---|---|---|\n"
      << "| `pdd.csv` | percent depth dose on the central axis at `pdd_ssd_cm`, square fields (side at the "
         "surface); 100 at "
         "`dmax_cm` for every field | fixed-SSD beams (PDD form of AAPM TG-71), with the Mayneord F factor "
         "at other SSDs |\n"
      << "| `tmr.csv` | tissue-maximum ratio, square fields (side at depth); 1 at `dmax_cm` | isocentric "
         "beams (TMR form) |\n"
      << "| `sc.csv` | collimator (head) scatter factor in air vs collimator field at the isocentre; 1 at 10 "
         "cm | every beam |\n"
      << "| `sp.csv` | phantom scatter factor vs field in the phantom; 1 at 10 cm (Sp = Scp / Sc: measure "
         "total scatter Scp "
         "and Sc and let `beamdata import` divide) | every beam |\n"
      << "| `oar.csv` | in-field off-axis ratio vs distance from the axis in the isocentre plane, per depth; "
         "1 on the axis | "
         "points off the central axis |\n"
      << "| wedge factor (`factor` or `table`) | wedged / open dose on the axis; a table by depth and "
         "equivalent square "
         "of the irradiated field at the isocentre plane | wedged beams |\n"
      << "| `orientation_table` (optional) | wedged profile along the gradient, thin end negative, 1 on the "
         "axis | "
         "wedged beams with the point off axis |\n"
      << "| `../ct/default.csv` | relative electron density vs CT number (HU) of your CT scanner; water (0 "
         "HU) = 1 | "
         "calculations through the CT; delete it if you do not use them |\n\n"
      << "Axes can be changed (rows and columns strictly increasing). Lookups between nodes are linear; a "
         "lookup\n"
      << "outside a table is never silent: the beam is not checked. See countersign's "
         "`beamdata/FORMAT.md`.\n\n"
      << "## From measured data\n\n"
      << "`countersign beamdata import <library> --machine " << request.machine
      << " --beam 6X --measured FILE.csv` reads measured points in long format\n"
      << "(`quantity,field_cm,depth_mm,off_axis_mm,value`, ...), resamples them onto these tables' grids\n"
      << "without extrapolating, normalises them, and records the source file's SHA-256 in a provenance "
         "note.\n\n"
      << "> The check supports, and does not replace, the physicist's review under local regulations and\n"
      << "> licensed practice. Review every table before clinical use.\n";
  return out.str();
}

}  // namespace countersign::beamdata::detail
