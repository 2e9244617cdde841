//! The protocol's messages: the header naysayer sends, the answers, the program's
//! messages and their strict parsing.

use serde::{Deserialize, Serialize};

use crate::class::Class;
use crate::oracle::Answer;

use super::PROTOCOL_VERSION;

/// What naysayer sends first: the game header.
#[derive(Serialize)]
struct GameMessage<'a> {
    msg: &'static str,
    protocol: u32,
    class: &'a Class,
    oracle: &'static str,
    query_dim: usize,
    integer_dim: usize,
    #[serde(rename = "box")]
    bounds: Option<BoxMessage>,
    accuracy: Option<AccuracyMessage>,
    budget: u64,
    seed: u64,
}

/// The box X, coordinate by coordinate.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct BoxMessage {
    /// Lower bounds.
    pub lower: Vec<f64>,
    /// Upper bounds.
    pub upper: Vec<f64>,
}

/// The accuracy of the class: `rho` or `eps`.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct AccuracyMessage {
    /// "rho" or "eps".
    pub name: String,
    /// Its value.
    pub value: f64,
}

/// The header as a program reads it (see the module docs); unknown fields are ignored.
#[derive(Clone, Debug, PartialEq, Deserialize)]
pub struct GameHeader {
    /// Protocol version.
    pub protocol: u32,
    /// The class.
    pub class: Class,
    /// The query budget.
    pub budget: u64,
    /// The game's seed.
    pub seed: u64,
}

#[derive(Serialize)]
pub(super) struct AnswerMessage<'a> {
    pub(super) msg: &'static str,
    pub(super) index: u64,
    pub(super) answer: &'a Answer,
}

#[derive(Deserialize)]
pub(super) struct AnswerMessageOwned {
    pub(super) msg: String,
    pub(super) index: u64,
    pub(super) answer: Answer,
}

/// A message from the program.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(tag = "msg", rename_all = "kebab-case", deny_unknown_fields)]
pub enum MethodMessage {
    /// The reply to the header.
    Ready {
        /// The protocol version the program speaks.
        protocol: u32,
    },
    /// Ask about a point.
    Query {
        /// The point.
        point: Vec<f64>,
    },
    /// Stop and claim a point.
    Output {
        /// The point.
        point: Vec<f64>,
    },
    /// Stop and claim that K is empty.
    Empty,
    /// Give up.
    Fail {
        /// Why.
        reason: String,
    },
}

/// The oracle kind, box and accuracy of a class, as the header states them.
pub(super) fn class_facts(
    class: &Class,
) -> (
    &'static str,
    usize,
    Option<BoxMessage>,
    Option<AccuracyMessage>,
) {
    let accuracy = |name: &str, value: f64| {
        Some(AccuracyMessage {
            name: name.into(),
            value,
        })
    };
    match class {
        Class::Feasibility(c) => (
            "separation",
            0,
            Some(BoxMessage {
                lower: vec![-c.half_width; c.dim],
                upper: vec![c.half_width; c.dim],
            }),
            accuracy("rho", c.rho),
        ),
        Class::FirstOrder(c) => (
            "first-order",
            0,
            Some(BoxMessage {
                lower: vec![-c.half_width; c.dim],
                upper: vec![c.half_width; c.dim],
            }),
            accuracy("eps", c.eps),
        ),
        // No box: x_0 = 0 and ||x_0 - x*|| <= R; the class names R and the horizon T.
        Class::LargeScale(_) => ("first-order", 0, None, None),
        Class::Lattice(c) => {
            let mut lower: Vec<f64> = c.lower.iter().map(|l| *l as f64).collect();
            let mut upper: Vec<f64> = c.upper.iter().map(|u| *u as f64).collect();
            lower.extend(std::iter::repeat_n(-c.half_width, c.cont_dim));
            upper.extend(std::iter::repeat_n(c.half_width, c.cont_dim));
            let acc = if c.cont_dim > 0 {
                accuracy("rho", c.rho)
            } else {
                None
            };
            (
                "separation",
                c.int_dim(),
                Some(BoxMessage { lower, upper }),
                acc,
            )
        }
    }
}

/// The header line naysayer sends for a game (without the newline).
pub fn header_line(class: &Class, budget: u64, seed: u64) -> String {
    let (oracle, integer_dim, bounds, accuracy) = class_facts(class);
    let message = GameMessage {
        msg: "game",
        protocol: PROTOCOL_VERSION,
        class,
        oracle,
        query_dim: class.query_dim(),
        integer_dim,
        bounds,
        accuracy,
        budget,
        seed,
    };
    serde_json::to_string(&message).expect("the header serializes")
}

pub(super) fn message_kind(message: &MethodMessage) -> &'static str {
    match message {
        MethodMessage::Ready { .. } => "ready",
        MethodMessage::Query { .. } => "query",
        MethodMessage::Output { .. } => "output",
        MethodMessage::Empty => "empty",
        MethodMessage::Fail { .. } => "fail",
    }
}

/// Parses one line from the program, saying what is wrong when it is not a message.
pub(super) fn parse_message(bytes: &[u8]) -> Result<MethodMessage, String> {
    let text = match std::str::from_utf8(bytes) {
        Ok(t) => t,
        Err(e) => {
            return Err(format!(
                "not valid UTF-8 (bad byte at offset {})",
                e.valid_up_to()
            ))
        }
    };
    let text = text.strip_suffix('\r').unwrap_or(text);
    if text.trim().is_empty() {
        return Err("an empty line (expected a JSON message)".into());
    }
    serde_json::from_str::<MethodMessage>(text).map_err(|e| {
        let has_word = |w: &str| text.contains(w);
        if has_word("NaN") || has_word("Infinity") {
            format!(
                "a non-finite number (NaN or Infinity; JSON has none and points must be \
                 finite): {}",
                excerpt(text)
            )
        } else if e.to_string().contains("out of range") {
            format!("a number out of the f64 range: {}", excerpt(text))
        } else if serde_json::from_str::<serde_json::Value>(text).is_err() {
            format!("not valid JSON ({e}): {}", excerpt(text))
        } else {
            format!(
                "not a protocol message ({e}); expected {{\"msg\":\"query\"|\"output\"|\
                 \"empty\"|\"fail\"|\"ready\", ...}}: {}",
                excerpt(text)
            )
        }
    })
}

/// The start of a line, for messages.
fn excerpt(text: &str) -> String {
    const MAX: usize = 80;
    if text.len() <= MAX {
        format!("{text:?}")
    } else {
        let mut end = MAX;
        while !text.is_char_boundary(end) {
            end -= 1;
        }
        format!("{:?}...", &text[..end])
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::class::{FeasibilityClass, Promise};

    #[test]
    fn messages_parse_strictly() {
        assert_eq!(
            parse_message(br#"{"msg":"query","point":[0.5,-1]}"#).unwrap(),
            MethodMessage::Query {
                point: vec![0.5, -1.0]
            }
        );
        assert_eq!(
            parse_message(br#"{"msg":"empty"}"#).unwrap(),
            MethodMessage::Empty
        );
        let err = parse_message(br#"{"msg":"query","point":[1],"extra":2}"#).unwrap_err();
        assert!(err.contains("not a protocol message"), "{err}");
        let err = parse_message(br#"{"msg":"query","point":[NaN]}"#).unwrap_err();
        assert!(err.contains("non-finite"), "{err}");
        let err = parse_message(b"{\"msg\":\"query\",\"point\":[1e999]}").unwrap_err();
        assert!(err.contains("range"), "{err}");
        let err = parse_message(b"\xff\xfe").unwrap_err();
        assert!(err.contains("UTF-8"), "{err}");
        let err = parse_message(b"hello").unwrap_err();
        assert!(err.contains("not valid JSON"), "{err}");
    }

    #[test]
    fn header_names_every_field() {
        let class =
            Class::Feasibility(FeasibilityClass::new(2, 1.0, 0.25, Promise::MayBeEmpty).unwrap());
        let line = header_line(&class, 10, 3);
        let value: serde_json::Value = serde_json::from_str(&line).unwrap();
        assert_eq!(value["msg"], "game");
        assert_eq!(value["protocol"], 1);
        assert_eq!(value["query_dim"], 2);
        assert_eq!(value["box"]["lower"][1], -1.0);
        assert_eq!(value["accuracy"]["name"], "rho");
        assert_eq!(value["budget"], 10);
        assert_eq!(value["seed"], 3);
        let header: GameHeader = serde_json::from_str(&line).unwrap();
        assert_eq!(header.class, class);
    }
}
