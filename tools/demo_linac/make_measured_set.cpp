// Writes a SYNTHETIC "measured" data set of the invented FERN-LINAC-1 in the long format that
// `countersign beamdata import` reads: depth-dose scans, TMR scans and profiles on irregular,
// jittered positions, point measurements of Sc and total scatter Scp, a wedge factor and a wedged
// profile - all sampled from the demo model (model.hpp) with bounded multiplicative noise and an
// arbitrary scale per curve, as a scanning system would export them. One field size of the demo
// grid (7 cm) is left out, so that import must interpolate across fields.
// Usage: make_measured_set OUTPUT_FILE. INVENTED demo data, not for clinical use.

#include <demo_linac/model.hpp>

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <filesystem>
#include <fstream>
#include <iomanip>
#include <iostream>
#include <random>
#include <sstream>
#include <string>
#include <vector>

namespace {

// Noise bounds (fractions): +-0.2 % on scanned curves, +-0.1 % on chamber point measurements.
constexpr double scan_noise = 0.002;
constexpr double point_noise = 0.001;

const std::vector<double> measured_fields_cm = {3, 4, 5, 6, 8, 10, 12, 15, 20, 25, 30, 35, 40};

// Deterministic on every platform: mt19937_64's output sequence is fixed by the standard, and the
// conversion to [0, 1) is done here rather than by a library distribution.
class Noise {
 public:
  double uniform() { return static_cast<double>(engine_() >> 11) * 0x1.0p-53; }
  double factor(double bound) { return 1.0 + bound * (2.0 * uniform() - 1.0); }
  double jitter(double amplitude) { return amplitude * (2.0 * uniform() - 1.0); }

 private:
  std::mt19937_64 engine_{20260115};
};

// Scan positions from `from` to `to`: steps of `fine` up to `fine_until`, then `coarse`, each
// position jittered by up to a third of its step (the ends stay exact).
std::vector<double> scan_positions(Noise& noise, double from, double to, double fine, double fine_until,
                                   double coarse) {
  std::vector<double> x{from};
  double nominal = from;
  while (true) {
    const double step = nominal < fine_until ? fine : coarse;
    nominal += step;
    if (nominal >= to) break;
    // Recorded to 0.1 mm, as a scanning system writes positions; the model is sampled there.
    x.push_back(std::round((nominal + noise.jitter(step / 3.0)) * 100.0) / 100.0);
  }
  x.push_back(to);
  return x;
}

std::string mm(double cm) {
  std::ostringstream text;
  text << std::fixed << std::setprecision(1) << cm * 10.0;
  return text.str();
}

struct Writer {
  std::ostream& out;
  std::string beam;
  // Empty strings leave a cell empty; PDD rows carry the SSD of the scan.
  void row(const std::string& quantity, const std::string& wedge, const std::string& field_cm,
           const std::string& depth_mm, const std::string& off_axis_mm, double value) {
    out << quantity << ',' << beam << ',' << wedge << ',' << field_cm << ',' << depth_mm << ',' << off_axis_mm
        << ',' << (quantity == "pdd" ? "100" : "") << ',' << std::fixed << std::setprecision(5) << value
        << std::defaultfloat << '\n';
  }
};

// Depth-scan positions with a point at dmax itself (the normalisation depth is always measured).
std::vector<double> depth_positions(Noise& noise, double dmax_cm) {
  std::vector<double> x = scan_positions(noise, 0.0, 30.5, 0.1, 4.0, 0.4);
  const auto nearest = std::min_element(
      x.begin(), x.end(), [&](double a, double b) { return std::abs(a - dmax_cm) < std::abs(b - dmax_cm); });
  *nearest = dmax_cm;
  return x;
}

void depth_scans(Writer& w, Noise& noise, const demo_linac::BeamModel& m) {
  for (const double field : measured_fields_cm) {
    const double pdd_scale = 0.97 + 0.06 * noise.uniform();  // the scanner's own normalisation
    for (const double d : depth_positions(noise, m.dmax_cm))
      w.row("pdd", "", std::to_string(static_cast<int>(field)), mm(d), "",
            pdd_scale * demo_linac::pdd(m, d, field, 100.0) * noise.factor(scan_noise));
    const double tmr_scale = 0.95 + 0.1 * noise.uniform();
    for (const double d : depth_positions(noise, m.dmax_cm))
      w.row("tmr", "", std::to_string(static_cast<int>(field)), mm(d), "",
            tmr_scale * demo_linac::tmr(m, d, field) * noise.factor(scan_noise));
  }
}

void profiles(Writer& w, Noise& noise, const demo_linac::BeamModel& m) {
  for (const double d : {0.0, m.dmax_cm, 5.0, 10.0, 15.0, 20.0, 25.0, 30.0}) {
    const double scale = 0.9 + 0.2 * noise.uniform();
    for (const double x : scan_positions(noise, -20.6, 20.6, 0.3, 0.0, 0.3))
      w.row("profile", "", "40", mm(d), mm(x),
            scale * demo_linac::oar(m, d, std::abs(x)) * noise.factor(scan_noise));
    const double wedge_scale = 0.5 + 0.2 * noise.uniform();
    for (const double x : scan_positions(noise, -15.4, 15.4, 0.3, 0.0, 0.3))
      w.row("wedge_profile", "W30", "30", mm(d), mm(x),
            wedge_scale * demo_linac::wedge_oar(m, "W30", d, x) * noise.factor(scan_noise));
  }
}

void point_factors(Writer& w, Noise& noise, const demo_linac::BeamModel& m) {
  const double reading_nc = 12.0 + noise.uniform();  // an arbitrary electrometer reading at 10 x 10
  for (const double field : measured_fields_cm) {
    const std::string f = std::to_string(static_cast<int>(field));
    w.row("sc", "", f, "", "", reading_nc * demo_linac::sc(m, field) * noise.factor(point_noise));
    w.row("scp", "", f, mm(10.0), "",
          reading_nc * demo_linac::sc(m, field) * demo_linac::sp(m, field) * noise.factor(point_noise));
  }
  w.row("wedge_factor", "W30", "10", mm(10.0), "",
        demo_linac::wedge_factor(m, "W30") * noise.factor(point_noise));
}

}  // namespace

int main(int argc, char** argv) {
  if (argc != 2) {
    std::cerr << "usage: make_measured_set OUTPUT_FILE\n";
    return 3;
  }
  const std::filesystem::path file = argv[1];
  std::filesystem::create_directories(file.parent_path());
  std::ofstream out(file, std::ios::binary);
  out << "# SYNTHETIC measured data of the INVENTED linac FERN-LINAC-1 (fictional Fernhollow Radiotherapy "
         "Unit),\n"
      << "# sampled from tools/demo_linac/model.hpp with noise (+-0.2 % scans, +-0.1 % point factors) on\n"
      << "# irregular positions by tools/demo_linac/make_measured_set. Not a measurement; not for clinical "
         "use.\n"
      << "quantity,beam,wedge,field_cm,depth_mm,off_axis_mm,ssd_cm,value\n";
  Noise noise;
  for (const double energy : {6.0, 10.0}) {
    const auto& m = demo_linac::beam_model(energy);
    Writer w{out, m.beam_id};
    depth_scans(w, noise, m);
    profiles(w, noise, m);
    point_factors(w, noise, m);
  }
  out.close();
  if (!out) {
    std::cerr << file.string() << ": cannot write\n";
    return 3;
  }
  std::cout << "wrote " << file.string() << "\n";
  return 0;
}
