//! What a bench needs from the circuit's netlist: the port order of the
//! subcircuit that is the regulator, read from its `.subckt` line (with
//! `+` continuation lines; SPICE names are case-insensitive).

/// The ports of subcircuit `name` in `text`, in order, or why not.
pub fn subcircuit_ports(text: &str, name: &str) -> Result<Vec<String>, String> {
    let mut lines = text.lines().peekable();
    while let Some(line) = lines.next() {
        let mut words = line.split_whitespace();
        let (Some(dot), Some(found)) = (words.next(), words.next()) else {
            continue;
        };
        if !dot.eq_ignore_ascii_case(".subckt") || !found.eq_ignore_ascii_case(name) {
            continue;
        }
        let mut ports: Vec<String> = words.map(str::to_string).collect();
        while let Some(next) = lines.peek() {
            let Some(rest) = next.trim_start().strip_prefix('+') else {
                break;
            };
            ports.extend(rest.split_whitespace().map(str::to_string));
            lines.next();
        }
        // Parameters (`params:` or `name=value`) end the port list.
        let end = ports
            .iter()
            .position(|p| p.contains('=') || p.eq_ignore_ascii_case("params:"))
            .unwrap_or(ports.len());
        ports.truncate(end);
        return Ok(ports);
    }
    Err(format!("the netlist has no `.subckt {name}` line"))
}

/// The netlist's text as a deck embeds it: without `.end` (which would end
/// the deck) and with a note where it starts and ends.
pub fn embedded(text: &str, path: &str) -> String {
    let mut out = format!("* ---- netlist {path} ----\n");
    for line in text.lines() {
        if line.trim().eq_ignore_ascii_case(".end") {
            continue;
        }
        out.push_str(line);
        out.push('\n');
    }
    out.push_str(&format!("* ---- end of {path} ----\n"));
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ports_follow_continuation_lines_and_stop_at_parameters() {
        let text =
            "* title\n.SUBCKT ldo in out\n+ gnd gd g params: ratio=2000\nM1 out g in in p\n.ends\n";
        assert_eq!(
            subcircuit_ports(text, "LDO").unwrap(),
            ["in", "out", "gnd", "gd", "g"]
        );
        assert!(subcircuit_ports(text, "other").is_err());
    }

    #[test]
    fn an_embedded_netlist_loses_its_end() {
        let e = embedded(".subckt a x\n.ends\n.end\n", "a.cir");
        assert!(e.contains(".ends"));
        assert!(!e.lines().any(|l| l == ".end"));
    }
}
