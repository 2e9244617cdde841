//! `naysayer check FILE`: re-verify a transcript; on a first-order transcript, also
//! audit its answers ([`crate::cli::audit`]: consistency, eps_cert, and whether the
//! method's output claims more accuracy than the answers allow).

use clap::Args;

use crate::certificate;
use crate::cli::play::{describe_outcome, lower_bound_text, queries_used_text};
use crate::cli::{describe_class, PathArg, EXIT_OK, EXIT_REJECTED};
use crate::error::Error;

/// Arguments of `naysayer check`.
#[derive(Debug, Args)]
pub struct CheckArgs {
    /// The transcript file (JSON Lines).
    pub file: PathArg,
    /// First-order transcripts: judge the method's output against this accuracy
    /// instead of the class's eps.
    #[arg(long)]
    pub eps: Option<f64>,
    /// First-order transcripts: write the audit's two witness functions (JSON) here.
    #[arg(long)]
    pub witnesses: Option<PathArg>,
    /// Skip the first-order audit (it solves linear programs).
    #[arg(long)]
    pub no_audit: bool,
    /// Exit 1 also when the audit finds the answers inconsistent or flags the claim.
    #[arg(long)]
    pub strict: bool,
}

/// Runs `check`: prints the verdict (and the audit of a first-order transcript); exit 0
/// when valid, 1 when rejected (with `--strict`, also when the audit finds the answers
/// inconsistent or flags the claim).
pub fn run(args: &CheckArgs) -> Result<u8, Error> {
    let code = verify(args)?;
    if args.no_audit {
        return Ok(code);
    }
    let audit = match crate::cli::audit::audit_file(&args.file, args.eps) {
        Ok(Some(audit)) => audit,
        Ok(None) => return Ok(code),
        // The verifier has reported what is wrong with the file.
        Err(Error::Transcript { .. }) if code == EXIT_REJECTED => return Ok(code),
        Err(error) => return Err(error),
    };
    if let Some(path) = &args.witnesses {
        crate::cli::audit::write_witnesses(path, &audit)?;
    }
    crate::say_text!(
        "{}",
        crate::cli::audit::describe(&audit, args.witnesses.as_ref())
    );
    let failed = audit.violation.is_some() || audit.claim == crate::cli::audit::Claim::Flagged;
    Ok(if args.strict && failed {
        EXIT_REJECTED
    } else {
        code
    })
}

/// Refuses a file that is not a transcript at all (empty, or a first line that is not a
/// header record) as bad input (exit 2), before judging it: exit 1 is kept for
/// transcripts whose claims do not hold.
fn refuse_non_transcript(path: &std::path::Path) -> Result<(), Error> {
    use std::io::{BufRead, Read};
    let file = std::fs::File::open(path).map_err(|source| Error::Io {
        action: "cannot read transcript",
        path: path.to_path_buf(),
        source,
    })?;
    let mut first = Vec::new();
    std::io::BufReader::new(file.take(1 << 20))
        .read_until(b'\n', &mut first)
        .map_err(|source| Error::Io {
            action: "cannot read transcript",
            path: path.to_path_buf(),
            source,
        })?;
    let not_a_transcript = |what: &str| Error::InvalidSetting {
        name: "transcript file",
        reason: format!(
            "{}: not a naysayer transcript ({what}); `check` reads the JSON Lines files \
             that `play -t`, `sweep` and `hunt -t` write",
            path.display()
        ),
    };
    if first.iter().all(|b| b.is_ascii_whitespace()) {
        return Err(not_a_transcript("the file is empty"));
    }
    let text = String::from_utf8_lossy(&first);
    let value: serde_json::Value = serde_json::from_str(text.trim_end())
        .map_err(|_| not_a_transcript("its first line is not JSON"))?;
    if value.get("type").and_then(|t| t.as_str()) != Some("header") {
        return Err(not_a_transcript("its first line is not a header record"));
    }
    Ok(())
}

fn verify(args: &CheckArgs) -> Result<u8, Error> {
    refuse_non_transcript(&args.file)?;
    match certificate::verify_file(&args.file) {
        Ok(verdict) => {
            crate::say!("valid certificate: {}", args.file.display());
            crate::say!(
                "class                  {}",
                describe_class(&verdict.header.class)
            );
            crate::say!(
                "method {} against adversary {}",
                verdict.header.method,
                verdict.header.adversary
            );
            crate::say!(
                "queries used           {}",
                queries_used_text(verdict.queries_used, verdict.censored)
            );
            crate::say!("certified lower bound  {}", lower_bound_text(&verdict));
            crate::say!(
                "outcome                {}",
                describe_outcome(&verdict.outcome, &verdict.ending)
            );
            if let Some(value) = verdict.certified_uncertainty {
                crate::say!("{}", crate::cli::play::certified_uncertainty_line(value));
            }
            Ok(EXIT_OK)
        }
        Err(error @ Error::Transcript { .. }) => {
            crate::say!("REJECTED: {}: {error}", args.file.display());
            Ok(EXIT_REJECTED)
        }
        Err(error) => Err(error),
    }
}
