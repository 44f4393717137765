#include "web_fixture.hpp"

#include <fstream>

namespace countersign::web {

namespace fs = std::filesystem;
using test::quote;

fs::path WebHistory::dir_;
fs::path WebHistory::results_;
std::string WebHistory::setup_problem_;

test::CommandOutput WebHistory::countersign(const std::string& arguments) {
  return test::run_command(quote(test::program().string()) + " " + arguments);
}

std::string WebHistory::results_option() { return " --results " + quote(results_.string()); }

void WebHistory::SetUpTestSuite() {
  dir_ = test::make_temp_dir("countersign-web");
  results_ = dir_ / "results";
  const fs::path inbox = dir_ / "inbox";
  fs::create_directories(inbox);
  const fs::path plans = test::source_dir() / "testdata" / "plans";
  fs::copy_file(plans / "fern_half_beam.dcm", inbox / "flagged.dcm");
  fs::copy_file(plans / "fern_box_4field.dcm", inbox / "box.dcm");
  fs::copy_file(plans / "fern_half_beam.dcm", inbox / "markup.dcm");
  // The caught error: 240 MU instead of 213.1 for the same dose (tests/cli/records_cli_test.cpp).
  auto modified = test::run_command("dcmodify -nb -m \"(300a,0070)[0].(300c,0004)[0].(300a,0086)=240.0\" " +
                                    quote((inbox / "flagged.dcm").string()));
  // Markup in every plan string the pages show; a new UID so that it is a plan of its own.
  if (modified.exit_code == 0) {
    modified = test::run_command(
        std::string{"dcmodify -nb -gin -m \"(0010,0010)=<script>alert(5)</script>^Fern\" "} +
        "-m \"(0010,0020)=" + script_patient_id + "\" -m \"(300a,0002)=<b>x</b>\" " +
        quote((inbox / "markup.dcm").string()));
  }
  if (modified.exit_code != 0) {
    setup_problem_ = "dcmodify (DCMTK, tools/install-deps) is needed: " + modified.err;
    return;
  }
  const auto watched =
      countersign("watch " + quote(inbox.string()) + " --out " + quote(results_.string()) +
                  " --once --study-wait 0");  // the demo plans name a structure set that is not sent
  if (watched.exit_code != 0) {
    setup_problem_ = "watch --once: " + watched.out + watched.err;
    return;
  }
  for (const auto& [name, role, password] : {std::tuple{"alice", "reviewer", reviewer_password},
                                             std::tuple{"victor", "viewer", viewer_password}}) {
    // In braces: run_command gives the whole line /dev/null as input, the pipe gives it the password.
    const auto added = test::run_command("{ printf '%s\\n' " + quote(password) + " | " +
                                         quote(test::program().string()) + " user add " + name + " --role " +
                                         role + " --password-stdin" + results_option() + "; }");
    if (added.exit_code != 0) setup_problem_ = "user add: " + added.out + added.err;
  }
}

void WebHistory::TearDownTestSuite() { fs::remove_all(dir_); }

}  // namespace countersign::web
