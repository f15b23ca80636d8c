//! `slant new FAMILY [options] [-o FILE]`: write a generated code-family circuit.
//!
//! The options map one to one onto [`crate::gen::GenSpec`]; the generator decides which apply to
//! which family and explains a refusal in one sentence (printed as a diagnostic, exit code 2: a
//! usage error, like a value the argument parser refuses).

use std::path::PathBuf;

use crate::base::{write_atomic, Diagnostic};
use crate::cli::CliError;
use crate::gen::{Entangler, Family, Flip, GenSpec, LogicalBasis, Order, Style, MAX_DISTANCE};

/// Arguments of `slant new`.
#[derive(Debug, clap::Args)]
#[command(
    after_help = "Families: repetition, surface, xzzx (add --periodic for the torus).\n\
Orders: hook-safe (default; circuit distance stays d), hook-aligned (hooks shorten the logical),\n\
custom:C,C,C,C for both check types or custom:C,C,C,C/C,C,C,C for X-type/Z-type checks, with\n\
corners nw, ne, sw, se in the order each check visits them.\n\
Examples:\n  slant new surface --distance 5 --rounds 5 -o surface_d5.slant\n  \
slant new xzzx --dx 3 --dz 5 --entangler cx\n  slant new xzzx --periodic --dx 4 --dz 3 --rounds 3"
)]
pub struct Args {
    /// Code family: repetition, surface or xzzx.
    #[arg(value_parser = parse_family)]
    pub family: Family,
    /// Code distance (square patch; the torus gets d columns × d+1 rows), at most 1001.
    /// Default 3.
    #[arg(long, short = 'd', value_parser = parse_distance)]
    pub distance: Option<u32>,
    /// Weight of the shortest X-type logical: rows of the patch (torus: rows), at most 1001.
    #[arg(long, value_parser = parse_distance)]
    pub dx: Option<u32>,
    /// Weight of the shortest Z-type logical: columns of the patch (torus: columns), at most
    /// 1001.
    #[arg(long, value_parser = parse_distance)]
    pub dz: Option<u32>,
    /// Syndrome-extraction rounds. Default: the larger of dx and dz.
    #[arg(long)]
    pub rounds: Option<u32>,
    /// Stored logical: z or x.
    #[arg(long, value_parser = ["z", "x"])]
    pub basis: Option<String>,
    /// Check measurement: ancilla (circuit) or product (Pauli-product measurements).
    #[arg(long, value_parser = ["ancilla", "product"])]
    pub style: Option<String>,
    /// Order in which checks touch their data: hook-safe, hook-aligned or custom:….
    #[arg(long, value_parser = |s: &str| s.parse::<Order>())]
    pub order: Option<Order>,
    /// Coupling gates: native (cx for X, cz for Z) or cx (cx with Hadamards on data).
    #[arg(long, value_parser = ["native", "cx"])]
    pub entangler: Option<String>,
    /// Repetition code: protect against x (bit) or z (phase) flips.
    #[arg(long, value_parser = ["x", "z"])]
    pub flip: Option<String>,
    /// XZZX on a torus (co-prime sides; product style).
    #[arg(long)]
    pub periodic: bool,
    /// Output file (default: standard output). Written atomically.
    #[arg(long, short = 'o')]
    pub output: Option<PathBuf>,
}

fn parse_family(s: &str) -> Result<Family, String> {
    s.parse()
}

/// A distance or side length: a whole number in `1..=MAX_DISTANCE`. Values outside that range
/// are usage errors whatever the family; the family's own rules (odd, at least 3, co-prime) are
/// checked by the generator.
fn parse_distance(s: &str) -> Result<u32, String> {
    let v: u64 = s
        .trim()
        .parse()
        .map_err(|_| format!("`{s}` is not a whole number"))?;
    if v == 0 {
        return Err("the distance must be at least 1".into());
    }
    if v > u64::from(MAX_DISTANCE) {
        return Err(format!(
            "the distance must be at most {MAX_DISTANCE} ({})",
            crate::gen::TOO_LARGE
        ));
    }
    Ok(v as u32)
}

impl Args {
    /// The generator spec these arguments describe.
    pub fn spec(&self) -> Result<GenSpec, String> {
        if self.distance.is_some() && (self.dx.is_some() || self.dz.is_some()) {
            return Err("give either `--distance` or `--dx`/`--dz`, not both".into());
        }
        let d = self.distance.unwrap_or(3);
        let (dx, dz) = match (self.dx, self.dz) {
            (None, None) if self.periodic => (d + 1, d),
            (None, None) => (d, d),
            (Some(x), Some(z)) => (x, z),
            _ if self.family == Family::Repetition => {
                return Err("the repetition code takes `--distance`".into())
            }
            _ => return Err("give both `--dx` and `--dz`".into()),
        };
        let mut spec = GenSpec::new(self.family, dz);
        spec.dx = if self.family == Family::Repetition {
            dz
        } else {
            dx
        };
        spec.rounds = self.rounds.unwrap_or(dx.max(dz));
        spec.basis = self.basis.as_deref().map(|b| {
            if b == "x" {
                LogicalBasis::X
            } else {
                LogicalBasis::Z
            }
        });
        spec.style = self.style.as_deref().map(|s| {
            if s == "product" {
                Style::Product
            } else {
                Style::Ancilla
            }
        });
        spec.order = self.order.clone();
        spec.entangler = self.entangler.as_deref().map(|e| {
            if e == "cx" {
                Entangler::Cx
            } else {
                Entangler::Native
            }
        });
        spec.flip = self
            .flip
            .as_deref()
            .map(|f| if f == "z" { Flip::Z } else { Flip::X });
        spec.periodic = self.periodic;
        Ok(spec)
    }
}

/// Runs `slant new`.
pub fn run(args: Args) -> Result<(), CliError> {
    // Every refusal here is about the option values given, so it is a usage error (exit 2) as
    // are the values the argument parser refuses.
    let usage = |m: String| CliError::Usage(Diagnostic::bare(format!("cannot generate: {m}")));
    let spec = args.spec().map_err(usage)?;
    let text = crate::gen::generate(&spec).map_err(|e| usage(e.to_string()))?;
    match &args.output {
        Some(path) => write_atomic(path, text.as_bytes())?,
        None => out!("{text}"),
    }
    Ok(())
}
