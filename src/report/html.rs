//! report.html: one self-contained page (images inline as data URIs, no scripts, no
//! network): the verdict first, then the charts, the daily budgets, the assumptions with
//! their sources, and the cautions.

use crate::mission::runner::SeasonResult;

/// One picture for the page.
#[derive(Debug, Clone)]
pub struct Figure {
    /// Caption.
    pub caption: String,
    /// PNG bytes.
    pub png: Vec<u8>,
}

/// What the page says besides the results.
#[derive(Debug, Clone)]
pub struct PageContext {
    /// Mission (site) name.
    pub mission: String,
    /// Lines of the assumptions section: (what, value, source).
    pub assumptions: Vec<(String, String, String)>,
    /// Route summary line.
    pub route_line: String,
    /// With two planners: one row per season (season, fixed route's verdict, sun-aware
    /// plan's verdict), shown beside each other after the verdict. Empty: one planner.
    pub comparison: Vec<(String, String, String)>,
    /// The cautions shown under the verdict (see [`crate::report::json::CAUTIONS`]).
    pub cautions: [&'static str; 4],
}

const B64: &[u8; 64] = b"ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/";

/// Standard base64 with padding (RFC 4648, section 4).
pub fn base64(bytes: &[u8]) -> String {
    let mut out = String::with_capacity(bytes.len().div_ceil(3) * 4);
    for chunk in bytes.chunks(3) {
        let b = [
            chunk[0],
            *chunk.get(1).unwrap_or(&0),
            *chunk.get(2).unwrap_or(&0),
        ];
        let n = (u32::from(b[0]) << 16) | (u32::from(b[1]) << 8) | u32::from(b[2]);
        for i in 0..4 {
            if i <= chunk.len() {
                out.push(B64[((n >> (18 - 6 * i)) & 63) as usize] as char);
            } else {
                out.push('=');
            }
        }
    }
    out
}

/// Escapes text for HTML.
pub fn escape(s: &str) -> String {
    s.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
        .replace('"', "&quot;")
}

const STYLE: &str = "body{font-family:sans-serif;max-width:1240px;margin:2em auto;padding:0 1em;\
color:#222}h1{margin-bottom:.2em}table{border-collapse:collapse;margin:1em 0}td,th{border:1px \
solid #bbb;padding:.25em .6em;text-align:right}th{background:#eef}td.l,th.l{text-align:left}\
.ok{color:#075;font-weight:bold}.bad{color:#b00;font-weight:bold}figure{margin:1.5em 0}\
img{max-width:100%;border:1px solid #ccc}.caution{background:#fff6e0;border-left:4px solid \
#e6a700;padding:.5em 1em}";

fn verdict_table(results: &[SeasonResult]) -> String {
    let mut t = String::from(
        "<table><tr><th class=l>season</th><th>date</th><th>verdict</th><th>min SOC</th>\
         <th>margin</th><th>generated (Wh)</th><th>consumed (Wh)</th><th class=l>why</th></tr>",
    );
    for r in results {
        let s = &r.summary;
        let c = &s.energy_consumed_wh;
        let (class, word) = if s.feasible {
            ("ok", "feasible")
        } else {
            ("bad", "infeasible")
        };
        t.push_str(&format!(
            "<tr><td class=l>{}</td><td>{}</td><td class={class}>{word}</td><td>{}</td>\
             <td>{}</td><td>{:.0}</td><td>{:.0}</td><td class=l>{}</td></tr>",
            escape(&s.name),
            s.date,
            s.min_soc_text(),
            s.margin_text(),
            s.energy_generated_wh,
            c.drive + c.hotel + c.payload + c.heater,
            escape(&s.reason)
        ));
    }
    t.push_str("</table>");
    t
}

fn budget_table(results: &[SeasonResult]) -> String {
    // The columns of daily-budget.csv, in its order.
    let mut t = String::from(
        "<table><tr><th class=l>season</th><th>local date</th><th>generated</th>\
         <th>curtailed</th><th>drive</th><th>hotel</th><th>payload</th><th>heater</th>\
         <th>losses</th><th>consumed</th><th>net</th><th>SOC start</th><th>SOC min</th>\
         <th>SOC end</th></tr>",
    );
    for r in results {
        for d in &r.days {
            let l = &d.ledger;
            t.push_str(&format!(
                "<tr><td class=l>{}</td><td>{}</td><td>{:.0}</td><td>{:.0}</td><td>{:.0}</td>\
                 <td>{:.0}</td><td>{:.0}</td><td>{:.0}</td><td>{:.1}</td><td>{:.0}</td>\
                 <td>{:.0}</td><td>{:.0} %</td><td>{:.0} %</td><td>{:.0} %</td></tr>",
                escape(&r.season.name),
                d.date,
                l.generated_wh,
                l.curtailed_wh,
                l.drive_wh,
                l.hotel_wh,
                l.payload_wh,
                l.heater_wh,
                l.losses_wh,
                l.consumed_wh(),
                d.net_wh(),
                100.0 * d.soc_start,
                100.0 * d.soc_min,
                100.0 * d.soc_end
            ));
        }
    }
    t.push_str(
        "</table><p>Energies in Wh per local day. Curtailed: solar energy the full (or \
         too cold) pack could not take; consumed: drive, hotel, payload and heater \
         together; net: generated less curtailed, consumed and the pack's losses \
         (daily-budget.csv has the same columns).</p>",
    );
    t
}

/// The whole page.
pub fn report_html(ctx: &PageContext, results: &[SeasonResult], figures: &[Figure]) -> String {
    let all = results.iter().all(|r| r.summary.feasible);
    let headline = if all {
        "<p class=ok>Every season is feasible under the model.</p>".to_string()
    } else {
        let bad: Vec<String> = results
            .iter()
            .filter(|r| !r.summary.feasible)
            .map(|r| escape(&r.season.name))
            .collect();
        format!("<p class=bad>Infeasible: {}.</p>", bad.join(", "))
    };
    let mut figs = String::new();
    if figures.is_empty() {
        figs.push_str("<p>No charts: no season was simulated.</p>");
    }
    for f in figures {
        figs.push_str(&format!(
            "<figure><img alt=\"{0}\" src=\"data:image/png;base64,{1}\"><figcaption>{0}</figcaption></figure>",
            escape(&f.caption),
            base64(&f.png)
        ));
    }
    let mut assumptions = String::from(
        "<table><tr><th class=l>what</th><th class=l>value</th><th class=l>source</th></tr>",
    );
    for (w, v, s) in &ctx.assumptions {
        assumptions.push_str(&format!(
            "<tr><td class=l>{}</td><td class=l>{}</td><td class=l>{}</td></tr>",
            escape(w),
            escape(v),
            escape(s)
        ));
    }
    assumptions.push_str("</table>");
    let comparison = if ctx.comparison.is_empty() {
        String::new()
    } else {
        let mut t = String::from(
            "<h2>Fixed route and sun-aware plan</h2><p>The verdict above is the sun-aware \
             plan's; the fixed route's run of each season is beside it.</p><table><tr>\
             <th class=l>season</th><th class=l>fixed route</th><th class=l>sun-aware plan</th></tr>",
        );
        for (season, fixed, sun) in &ctx.comparison {
            t.push_str(&format!(
                "<tr><td class=l>{}</td><td class=l>{}</td><td class=l>{}</td></tr>",
                escape(season),
                escape(fixed),
                escape(sun)
            ));
        }
        t.push_str("</table>");
        t
    };
    let cautions: String = ctx
        .cautions
        .iter()
        .map(|c| format!("<li>{}</li>", escape(c)))
        .collect();
    format!(
        "<!DOCTYPE html><html lang=en><head><meta charset=utf-8><title>sunward report: {m}</title>\
         <style>{STYLE}</style></head><body><h1>sunward report: {m}</h1>\
         <h2>Verdict</h2>{headline}{verdicts}<p>{route}</p>{comparison}\
         <div class=caution><ul>{cautions}</ul></div>\
         <h2>Charts</h2>{figs}<h2>Daily energy budgets</h2>{budgets}\
         <h2>Assumptions and sources</h2>{assumptions}\
         <p>Made by sunward {v}. Margin = lowest state of charge minus the reserve, as a \
         fraction of nominal capacity.</p></body></html>",
        m = escape(&ctx.mission),
        verdicts = verdict_table(results),
        route = escape(&ctx.route_line),
        budgets = if results.iter().all(|r| r.days.is_empty()) {
            "<p>No daily budgets: no season was simulated.</p>".to_string()
        } else {
            budget_table(results)
        },
        v = env!("CARGO_PKG_VERSION"),
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    /// RFC 4648 section 10 test vectors.
    #[test]
    fn base64_matches_the_rfc_vectors() {
        let cases = [
            ("", ""),
            ("f", "Zg=="),
            ("fo", "Zm8="),
            ("foo", "Zm9v"),
            ("foob", "Zm9vYg=="),
            ("fooba", "Zm9vYmE="),
            ("foobar", "Zm9vYmFy"),
        ];
        for (i, o) in cases {
            assert_eq!(base64(i.as_bytes()), o);
        }
    }

    /// The report's budget table has daily-budget.csv's columns, in its order.
    #[test]
    fn the_budget_table_has_the_csv_columns() {
        let html = budget_table(&[]);
        let heads: Vec<String> = html
            .split("<th")
            .skip(1)
            .map(|h| h[h.find('>').unwrap() + 1..h.find("</th>").unwrap()].replace(' ', "_"))
            .collect();
        let csv: Vec<String> = crate::report::csv::DAILY_HEADER
            .split(',')
            .map(|c| {
                c.trim_end_matches("_wh")
                    .replace("date_local", "local_date")
            })
            .map(|c| c.replace("soc", "SOC"))
            .collect();
        assert_eq!(heads, csv);
    }
}
