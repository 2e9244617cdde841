//! The small CSV dialect of the results files (RFC 4180 quoting, one record a line, no
//! embedded line breaks): writing a row, splitting a line.

/// Quotes a CSV field when it holds a comma, a quote or a line break (RFC 4180); a line
/// break inside a field is written as a space.
pub fn field(text: &str) -> String {
    if text.contains([',', '"', '\n', '\r']) {
        format!(
            "\"{}\"",
            text.replace('"', "\"\"").replace(['\n', '\r'], " ")
        )
    } else {
        text.to_string()
    }
}

/// One CSV line (with its line break) from unquoted fields.
pub fn row(fields: &[String]) -> String {
    let mut row = fields
        .iter()
        .map(|f| field(f))
        .collect::<Vec<_>>()
        .join(",");
    row.push('\n');
    row
}

/// Splits one CSV line into fields (RFC 4180 quoting, no embedded line breaks).
pub fn split(line: &str) -> Vec<String> {
    let mut fields = Vec::new();
    let mut field = String::new();
    let mut quoted = false;
    let mut chars = line.chars().peekable();
    while let Some(c) = chars.next() {
        match (quoted, c) {
            (true, '"') if chars.peek() == Some(&'"') => {
                field.push('"');
                chars.next();
            }
            (true, '"') => quoted = false,
            (false, '"') if field.is_empty() => quoted = true,
            (false, ',') => fields.push(std::mem::take(&mut field)),
            (_, c) => field.push(c),
        }
    }
    fields.push(field);
    fields
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn fields_round_trip() {
        // RFC 4180 section 2 rules 5-7 (from memory): quotes around fields with commas or
        // quotes, doubled quotes inside.
        let fields = vec![
            "plain".to_string(),
            "a,b".into(),
            "say \"hi\"".into(),
            String::new(),
        ];
        let line = row(&fields);
        assert_eq!(line, "plain,\"a,b\",\"say \"\"hi\"\"\",\n");
        assert_eq!(split(line.trim_end()), fields);
    }
}
