// The frame of every page: style sheet, header with navigation, the caution, the footer.

#include <countersign/report/html_report.hpp>
#include <countersign/util/version.hpp>
#include <countersign/web/pages.hpp>

#include "page_parts.hpp"

namespace countersign::web {

namespace {

// Our own palette: slate header, paper-white body; verdicts carry words and border styles as well as
// colour (solid thin = within, solid thick = outside, dashed = not checked) so print keeps them apart.
constexpr std::string_view style_sheet = R"css(
*{box-sizing:border-box}
body{margin:0;font:15px/1.45 "DejaVu Sans",Verdana,sans-serif;color:#1d2430;background:#fbfaf7}
header.top{display:flex;align-items:center;gap:1.5em;padding:.6em 1.2em;background:#2c3a4f;color:#f3f1ea}
header.top .name{font-weight:bold;letter-spacing:.04em}
header.top nav a{color:#f3f1ea;margin-right:1.1em;text-decoration:none;border-bottom:2px solid transparent}
header.top nav a:hover{border-bottom-color:#c9b98a}
header.top .who{margin-left:auto;display:flex;gap:.6em;align-items:center}
header.top button{font:inherit;background:none;color:#f3f1ea;border:1px solid #8796ab;padding:.1em .6em;cursor:pointer}
main{max-width:1240px;margin:0 auto;padding:1em 1.2em 2em}
h1{font-size:1.45em;margin:.4em 0 .6em}
h2{font-size:1.15em;margin:1.4em 0 .5em;border-bottom:1px solid #cfd5dd;padding-bottom:.2em}
table{border-collapse:collapse;width:100%;margin:.4em 0 1em}
th,td{text-align:left;padding:.3em .5em;border-bottom:1px solid #dfe3e8;vertical-align:top}
th{background:#eef0f3;font-weight:600}
td.num,th.num{text-align:right;font-variant-numeric:tabular-nums}
tr.open td:first-child{border-left:4px solid #a23b2a}
.caution{border:1px solid #b39b5c;background:#fbf4df;padding:.5em .8em;margin:.6em 0 1em}
.badge{display:inline-block;padding:0 .45em;border-radius:3px;white-space:nowrap;font-size:.92em}
.badge.within{border:1px solid #3e7a4c;color:#234d2d;background:#e5f1e7}
.badge.outside{border:2px solid #a23b2a;color:#7a2114;background:#f9e1dc;font-weight:bold}
.badge.not-checked{border:2px dashed #8a6a12;color:#5e4708;background:#fdf1cf;font-weight:bold}
.badge.skipped{border:1px dotted #7b8591;color:#4a525c;background:#f1f2f4}
.review{font-size:.9em;white-space:nowrap}
.review-open{font-weight:bold;color:#7a2114}
.review-rejected{font-weight:bold;color:#7a2114;text-decoration:underline}
.counts span{margin-right:1.2em}
form.filters{display:flex;flex-wrap:wrap;gap:.8em;align-items:flex-end;margin:.5em 0 1em}
form.filters label{display:flex;flex-direction:column;font-size:.88em}
input,select,textarea,button{font:inherit}
.notice{border-left:4px solid #2c3a4f;background:#eef0f3;padding:.4em .8em}
.problem{border-left:4px solid #a23b2a;background:#f9e1dc;padding:.4em .8em}
.hash{font-family:"DejaVu Sans Mono",monospace;font-size:.86em;word-break:break-all}
iframe.record{width:100%;height:900px;border:1px solid #cfd5dd;background:#fff}
.chart{border:1px solid #cfd5dd;background:#fff;margin:.4em 0}
.login{max-width:26em;margin:3em auto}
.login label{display:block;margin:.6em 0 .2em}
.login input{width:100%;padding:.3em}
footer{max-width:1240px;margin:0 auto;padding:0 1.2em 2em;color:#56606c;font-size:.85em}
@media print{header.top nav,header.top .who form,form.filters,form.review-form,iframe.record{display:none}
 header.top{background:none;color:#000;border-bottom:2px solid #000}body{background:#fff}a{color:#000}}
)css";

std::string header(const std::optional<Viewer>& viewer) {
  std::string html = "<header class=\"top\"><span class=\"name\">countersign &middot; department view</span>";
  if (viewer) {
    html +=
        "<nav><a href=\"/\">Worklist</a><a href=\"/trends\">Trends</a><a href=\"/library\">Beam "
        "data</a></nav>";
    html += "<span class=\"who\"><span id=\"user\">" + parts::esc(viewer->user) + " (" +
            std::string{to_string(viewer->role)} + ")</span><form method=\"post\" action=\"/logout\">" +
            parts::csrf_field(viewer->csrf_token) + "<button type=\"submit\">Log out</button></form></span>";
  }
  return html + "</header>";
}

}  // namespace

std::string page(std::string_view title, const std::optional<Viewer>& viewer, std::string_view body) {
  std::string html =
      "<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">"
      "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">"
      "<title>" +
      parts::esc(title) + " &middot; countersign</title><style>" + std::string{style_sheet} +
      "</style></head><body>";
  html += header(viewer);
  html += "<main><p class=\"caution\" id=\"caution\">" + parts::esc(report::caution_text()) + "</p>";
  html += "<h1>" + parts::esc(title) + "</h1>";
  html += body;
  html += "</main><footer>countersign " + parts::esc(version_string) +
          " &middot; an independent check of monitor units; pages show the records of the history "
          "store as they are.</footer></body></html>\n";
  return html;
}

std::string login_page(std::string_view message, const std::string& form_token) {
  std::string body = "<div class=\"login\">";
  if (!message.empty()) body += "<p class=\"problem\" id=\"login-message\">" + parts::esc(message) + "</p>";
  body +=
      "<form method=\"post\" action=\"/login\" id=\"login\">" + parts::csrf_field(form_token) +
      "<label for=\"name\">User name</label><input id=\"name\" name=\"name\" autocomplete=\"username\" "
      "required>"
      "<label for=\"password\">Password</label>"
      "<input id=\"password\" name=\"password\" type=\"password\" autocomplete=\"current-password\" required>"
      "<p><button type=\"submit\">Log in</button></p></form></div>";
  return page("Log in", std::nullopt, body);
}

std::string message_page(std::string_view title, std::string_view message,
                         const std::optional<Viewer>& viewer) {
  return page(title, viewer, "<p class=\"problem\" id=\"message\">" + parts::esc(message) + "</p>");
}

}  // namespace countersign::web
