//! Code-family generators: a [`GenSpec`] in, circuit text in slant's language out.
//!
//! Every generator writes a memory experiment: data reset, `rounds` rounds of syndrome extraction
//! (each wrapped in `round { }`), a final data readout, detectors for every round including the
//! first and the final one, and one observable per logical qubit. The text uses loops and
//! `param`s rather than unrolled statements, so a distance-25 patch stays a page long and
//! `--set` can resize it; it starts with a comment holding the exact `slant new` command.
//!
//! Conventions shared by all families (so coordinates mean the same thing everywhere):
//!
//! - data qubit `d[i, j]` (column `i`, row `j`; rows grow downwards, "north" is smaller `j`) sits
//!   at `(2i + 1, 2j + 1)`; the check (ancilla `a[i, j]`, result `m[r, i, j]`) whose south-east
//!   data qubit is `d[i, j]` sits at `(2i, 2j)`. The repetition code is the single row `j = 0`
//!   with data at `(2k + 1, 0)` and check `k` at `(2k + 2, 0)`;
//! - detectors carry `(x, y, round)` with the check's `(x, y)`; the final-readout detectors have
//!   round `rounds`;
//! - every ancilla is prepared in `|+>`, coupled to each data qubit by a controlled-P (P the
//!   check's Pauli there) and read out in the x basis. [`Entangler::Native`] writes controlled-X
//!   as `cx` and controlled-Z as `cz`; [`Entangler::Cx`] writes controlled-Z as `h · cx · h` on
//!   the data qubit, which turns data Z faults into X faults (bias-breaking);
//! - `--dx` is the weight of the shortest X-type logical (the number of rows of a rotated
//!   patch), `--dz` the weight of the shortest Z-type logical (the number of columns). For XZZX
//!   these name the CSS parent's logicals; for the torus they are simply rows and columns.
//!
//! The text goes through the parser and the canonical printer of [`crate::lang`] before it is
//! returned, so generated files are in `slant fmt` form. The generators do not otherwise check
//! their output: tests run every generated circuit through [`crate::ir::load_source`] (determinism)
//! and verify the codes independently of the generator.

mod repetition;
mod rotated;
mod torus;

use std::fmt;
use std::fmt::Write as _;

/// The code families `slant new` knows, with one-line descriptions (for `--help` and errors).
pub const FAMILIES: [(&str, &str); 3] = [
    (
        "repetition",
        "bit-flip (`--flip x`) or phase-flip (`--flip z`) repetition code",
    ),
    ("surface", "rotated CSS surface code, square or rectangular"),
    (
        "xzzx",
        "rotated XZZX surface code (every check X Z Z X); `--periodic` for the co-prime torus",
    ),
];

/// The largest distance (and torus side) the generators accept.
///
/// The text they write does not grow with the distance, but checking the coupling order is
/// linear in the number of checks, and nothing downstream could use a larger patch: at distance
/// 1001 a patch already has about a million data qubits, and one round of it is past the default
/// size limit of `slant check`.
pub const MAX_DISTANCE: u32 = 1001;

/// Why [`MAX_DISTANCE`] exists, in the words of the error message.
pub(crate) const TOO_LARGE: &str =
    "larger patches cannot be checked or simulated in reasonable time";

/// A code family.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Family {
    /// Repetition code on a line.
    Repetition,
    /// Rotated CSS surface code.
    Surface,
    /// Rotated XZZX surface code (planar, or a torus with `periodic`).
    Xzzx,
}

impl Family {
    /// The name used on the command line.
    pub fn name(self) -> &'static str {
        match self {
            Family::Repetition => "repetition",
            Family::Surface => "surface",
            Family::Xzzx => "xzzx",
        }
    }
}

impl std::str::FromStr for Family {
    type Err = String;
    fn from_str(s: &str) -> Result<Family, String> {
        match s {
            "repetition" => Ok(Family::Repetition),
            "surface" => Ok(Family::Surface),
            "xzzx" => Ok(Family::Xzzx),
            _ => Err(format!(
                "unknown family `{s}`; known: {}",
                FAMILIES.map(|f| f.0).join(", ")
            )),
        }
    }
}

/// Which logical operator a memory experiment stores and reads out.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum LogicalBasis {
    /// The X-type logical (for XZZX: the conjugate of the CSS parent's X logical).
    X,
    /// The Z-type logical (for XZZX: the conjugate of the CSS parent's Z logical).
    Z,
}

/// How checks are measured.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Style {
    /// One ancilla per check, coupled gate by gate (circuit-level studies).
    Ancilla,
    /// Each check is one Pauli-product measurement (code-capacity and phenomenological studies).
    Product,
}

/// The two-qubit gates that couple an ancilla to data.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Entangler {
    /// `cx` everywhere; Z couplings as `h · cx · h` on the data qubit (bias-breaking).
    Cx,
    /// `cx` for X couplings and `cz` for Z couplings (bias-friendly).
    Native,
}

/// Which error the repetition code protects against.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Flip {
    /// Bit flips: checks `Z Z`, logical `Z`.
    X,
    /// Phase flips: checks `X X`, logical `X`.
    Z,
}

/// A corner of a rotated-code check, i.e. which of its data qubits.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Dir {
    /// North-east: `d[i, j - 1]` of check `(i, j)`.
    Ne,
    /// North-west: `d[i - 1, j - 1]`.
    Nw,
    /// South-east: `d[i, j]`.
    Se,
    /// South-west: `d[i - 1, j]`.
    Sw,
}

impl Dir {
    /// All four, in reading order.
    pub const ALL: [Dir; 4] = [Dir::Nw, Dir::Ne, Dir::Sw, Dir::Se];

    /// The lower-case name used in `--order custom:…`.
    pub fn name(self) -> &'static str {
        match self {
            Dir::Ne => "ne",
            Dir::Nw => "nw",
            Dir::Se => "se",
            Dir::Sw => "sw",
        }
    }

    /// Offset `(di, dj)` from the check index to the data index.
    pub fn offset(self) -> (i64, i64) {
        match self {
            Dir::Ne => (0, -1),
            Dir::Nw => (-1, -1),
            Dir::Se => (0, 0),
            Dir::Sw => (-1, 0),
        }
    }

    fn parse(s: &str) -> Result<Dir, String> {
        Dir::ALL
            .into_iter()
            .find(|d| d.name() == s)
            .ok_or_else(|| format!("unknown corner `{s}` (use nw, ne, sw, se)"))
    }
}

/// The order in which the checks of a rotated code touch their data qubits: one list for the
/// checks that are X-type in the CSS code, one for the Z-type ones (for XZZX: the CSS parent's
/// colouring, X-type checks being those with `i + j` even).
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Order {
    /// How the order was named on the command line (`hook-safe`, `custom:…`).
    pub name: String,
    /// Corners visited by X-type checks, step by step.
    pub x_type: [Dir; 4],
    /// Corners visited by Z-type checks, step by step.
    pub z_type: [Dir; 4],
}

impl Order {
    /// The named orders: `hook-safe` keeps the circuit distance at d (the last two data qubits of
    /// an X-type check share a row, perpendicular to the vertical X logical; those of a Z-type
    /// check share a column, perpendicular to the horizontal Z logical), `hook-aligned` turns
    /// both hooks parallel to the logical they shorten.
    pub const NAMED: [&'static str; 2] = ["hook-safe", "hook-aligned"];

    /// The hook-safe order: X-type checks `nw, ne, sw, se` ("Z" shape), Z-type `nw, sw, ne, se`
    /// ("N" shape). "Low-distance surface codes under realistic quantum noise", PRA 90, 062320
    /// (2014) discusses this choice.
    pub fn hook_safe() -> Order {
        Order {
            name: "hook-safe".into(),
            x_type: [Dir::Nw, Dir::Ne, Dir::Sw, Dir::Se],
            z_type: [Dir::Nw, Dir::Sw, Dir::Ne, Dir::Se],
        }
    }

    /// The other standard order, with the two shapes swapped: hooks run along the logicals.
    pub fn hook_aligned() -> Order {
        Order {
            name: "hook-aligned".into(),
            x_type: [Dir::Nw, Dir::Sw, Dir::Ne, Dir::Se],
            z_type: [Dir::Nw, Dir::Ne, Dir::Sw, Dir::Se],
        }
    }
}

impl std::str::FromStr for Order {
    type Err = String;

    /// `hook-safe`, `hook-aligned`, `custom:c1,c2,c3,c4` (both check types) or
    /// `custom:c1,c2,c3,c4/c1,c2,c3,c4` (X-type / Z-type), corners `nw ne sw se`.
    fn from_str(s: &str) -> Result<Order, String> {
        match s {
            "hook-safe" => return Ok(Order::hook_safe()),
            "hook-aligned" => return Ok(Order::hook_aligned()),
            _ => {}
        }
        let Some(body) = s.strip_prefix("custom:") else {
            return Err(format!(
                "unknown order `{s}`; use hook-safe, hook-aligned or custom:nw,ne,sw,se[/nw,sw,ne,se]"
            ));
        };
        let list = |part: &str| -> Result<[Dir; 4], String> {
            let dirs = part
                .split(',')
                .map(|c| Dir::parse(c.trim()))
                .collect::<Result<Vec<_>, _>>()?;
            let arr: [Dir; 4] = dirs.try_into().map_err(|v: Vec<Dir>| {
                format!("`{part}` lists {} corners; give all four once", v.len())
            })?;
            for d in Dir::ALL {
                if !arr.contains(&d) {
                    return Err(format!(
                        "`{part}` does not visit `{}`; give all four corners once",
                        d.name()
                    ));
                }
            }
            Ok(arr)
        };
        let (x_type, z_type) = match body.split_once('/') {
            Some((x, z)) => (list(x)?, list(z)?),
            None => {
                let l = list(body)?;
                (l, l)
            }
        };
        Ok(Order {
            name: s.to_string(),
            x_type,
            z_type,
        })
    }
}

/// What to generate. Options left `None` take the family's default; options that do not apply
/// to the family must stay `None` (the generator says why otherwise).
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct GenSpec {
    /// The family.
    pub family: Family,
    /// Weight of the shortest X-type logical: rows of a rotated patch (odd, at least 3). For the
    /// repetition code this is the distance.
    pub dx: u32,
    /// Weight of the shortest Z-type logical: columns of a rotated patch.
    pub dz: u32,
    /// Number of syndrome-extraction rounds (at least 1).
    pub rounds: u32,
    /// Stored logical; default Z (repetition: follows `flip`; torus: not applicable).
    pub basis: Option<LogicalBasis>,
    /// Check measurement style; default ancilla (torus: product, the only one supported).
    pub style: Option<Style>,
    /// Coupling order of rotated-code ancilla circuits; default hook-safe.
    pub order: Option<Order>,
    /// Ancilla coupling gates; default native.
    pub entangler: Option<Entangler>,
    /// Repetition code only: which flips it protects against; default x.
    pub flip: Option<Flip>,
    /// XZZX only: periodic (torus) lattice with co-prime sides `dz` columns × `dx` rows.
    pub periodic: bool,
}

impl GenSpec {
    /// A square spec of distance `d` with `d` rounds and every option at its default.
    pub fn new(family: Family, d: u32) -> GenSpec {
        GenSpec {
            family,
            dx: d,
            dz: d,
            rounds: d,
            basis: None,
            style: None,
            order: None,
            entangler: None,
            flip: None,
            periodic: false,
        }
    }

    /// The `slant new …` command line that regenerates exactly this circuit, every applicable
    /// option spelled out (so the header stays true when defaults change).
    pub fn command_line(&self) -> Result<String, GenError> {
        let r = self.resolve()?;
        let mut s = format!("slant new {}", self.family.name());
        if self.periodic {
            s.push_str(" --periodic");
        }
        if self.family == Family::Repetition || self.dx == self.dz {
            let _ = write!(s, " --distance {}", self.dz);
        } else {
            let _ = write!(s, " --dx {} --dz {}", self.dx, self.dz);
        }
        let _ = write!(s, " --rounds {}", self.rounds);
        if let Some(f) = r.flip {
            let _ = write!(s, " --flip {}", if f == Flip::X { "x" } else { "z" });
        }
        if let Some(b) = r.basis {
            if self.family != Family::Repetition {
                let _ = write!(
                    s,
                    " --basis {}",
                    if b == LogicalBasis::X { "x" } else { "z" }
                );
            }
        }
        let _ = write!(
            s,
            " --style {}",
            if r.style == Style::Ancilla {
                "ancilla"
            } else {
                "product"
            }
        );
        if let Some(o) = &r.order {
            let _ = write!(s, " --order {}", o.name);
        }
        if let Some(e) = r.entangler {
            let _ = write!(
                s,
                " --entangler {}",
                if e == Entangler::Cx { "cx" } else { "native" }
            );
        }
        Ok(s)
    }

    /// Checks the options against the family and fills in defaults.
    fn resolve(&self) -> Result<Resolved, GenError> {
        let err = |m: String| Err(GenError(m));
        let fam = self.family.name();
        if self.periodic && self.dx.max(self.dz) > MAX_DISTANCE {
            return err(format!(
                "torus sides must be at most {MAX_DISTANCE}, got {} × {} ({TOO_LARGE})",
                self.dz, self.dx
            ));
        }
        for (name, v) in [("dx", self.dx), ("dz", self.dz)] {
            if v > MAX_DISTANCE {
                let what = if self.family == Family::Repetition || self.dx == self.dz {
                    "distance".to_string()
                } else {
                    format!("`--{name}`")
                };
                return err(format!(
                    "{what} must be at most {MAX_DISTANCE}, got {v} ({TOO_LARGE})"
                ));
            }
        }
        if self.flip.is_some() && self.family != Family::Repetition {
            return err(format!(
                "`--flip` applies to the repetition code only, not to `{fam}`"
            ));
        }
        if self.periodic && self.family != Family::Xzzx {
            return err(format!(
                "`--periodic` applies to `xzzx` only, not to `{fam}`"
            ));
        }
        if self.periodic {
            if self.dx < 2 || self.dz < 2 {
                return err(format!(
                    "torus sides must be at least 2, got {} × {}",
                    self.dz, self.dx
                ));
            }
            if gcd(self.dx, self.dz) != 1 {
                return err(format!(
                    "torus sides {} × {} are not co-prime (common factor {}); the generator \
                     supports co-prime sides only, e.g. d × (d+1)",
                    self.dz,
                    self.dx,
                    gcd(self.dx, self.dz)
                ));
            }
            if self.style == Some(Style::Ancilla) {
                return err("the torus is generated in the product style only; drop \
                            `--style ancilla`"
                    .into());
            }
            if self.basis.is_some() {
                return err("the torus memory always stores the Y-string logical that \
                            anticommutes with the all-Z logical; drop `--basis`"
                    .into());
            }
        } else {
            for (name, v) in [("dx", self.dx), ("dz", self.dz)] {
                if v < 3 || v % 2 == 0 {
                    let what = if self.family == Family::Repetition || self.dx == self.dz {
                        "distance".to_string()
                    } else {
                        format!("`--{name}`")
                    };
                    return err(format!(
                        "{what} must be odd and at least 3, got {v} (an even distance corrects no \
                         more errors than the odd one below it)"
                    ));
                }
            }
        }
        // After the distances: a missing `--rounds` defaults to the distance, so a zero distance
        // would otherwise be reported as zero rounds.
        if self.rounds == 0 {
            return err("`--rounds` must be at least 1".into());
        }
        let style = self.style.unwrap_or(if self.periodic {
            Style::Product
        } else {
            Style::Ancilla
        });
        if style == Style::Product {
            if self.order.is_some() {
                return err("`--order` applies to `--style ancilla` only".into());
            }
            if self.entangler.is_some() {
                return err("`--entangler` applies to `--style ancilla` only".into());
            }
        }
        let (flip, basis) = if self.family == Family::Repetition {
            let flip = self.flip.unwrap_or(Flip::X);
            let implied = if flip == Flip::X {
                LogicalBasis::Z
            } else {
                LogicalBasis::X
            };
            if self.basis.is_some_and(|b| b != implied) {
                return err(format!(
                    "the {} repetition code stores its {} logical; `--basis` must be {} or absent",
                    if flip == Flip::X {
                        "bit-flip"
                    } else {
                        "phase-flip"
                    },
                    if flip == Flip::X { "Z" } else { "X" },
                    if flip == Flip::X { "z" } else { "x" },
                ));
            }
            if self.order.is_some() {
                return err(
                    "`--order` applies to the rotated families (surface, xzzx) only".into(),
                );
            }
            (Some(flip), Some(implied))
        } else if self.periodic {
            (None, None)
        } else {
            (None, Some(self.basis.unwrap_or(LogicalBasis::Z)))
        };
        let ancilla = style == Style::Ancilla;
        let order = if ancilla && self.family != Family::Repetition {
            Some(self.order.clone().unwrap_or_else(Order::hook_safe))
        } else {
            None
        };
        Ok(Resolved {
            basis,
            entangler: ancilla.then(|| self.entangler.unwrap_or(Entangler::Native)),
            flip,
            order,
            style,
        })
    }
}

/// The spec's options after defaults, as the generators consume them.
struct Resolved {
    basis: Option<LogicalBasis>,
    entangler: Option<Entangler>,
    flip: Option<Flip>,
    order: Option<Order>,
    style: Style,
}

/// A spec the generators cannot honour, with a one-sentence reason.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct GenError(pub String);

impl fmt::Display for GenError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.0)
    }
}

impl std::error::Error for GenError {}

/// Generates the circuit text for `spec`.
pub fn generate(spec: &GenSpec) -> Result<String, GenError> {
    let r = spec.resolve()?;
    let command = spec.command_line()?;
    let mut w = Text::default();
    w.line(&format!("# generated by: {command}"));
    match spec.family {
        Family::Repetition => repetition::write(&mut w, spec, &r),
        Family::Surface | Family::Xzzx if spec.periodic => torus::write(&mut w, spec),
        Family::Surface => rotated::write(&mut w, spec, &r, false)?,
        Family::Xzzx => rotated::write(&mut w, spec, &r, true)?,
    }
    canonical(w.finish())
}

/// Passes the text through the parser and the canonical printer, so generated files are already
/// in `slant fmt` form (byte-stable under `fmt --check`). A parse failure here is a generator bug.
fn canonical(text: String) -> Result<String, GenError> {
    let source = crate::base::Source::new("generated.slant", text);
    let ast = crate::lang::parse(&source).map_err(|diags| {
        let first = diags.first().map(|d| d.render()).unwrap_or_default();
        GenError(format!(
            "internal error: the generator wrote text the parser rejects (please report):\n{first}"
        ))
    })?;
    Ok(crate::lang::print(&ast))
}

fn gcd(a: u32, b: u32) -> u32 {
    if b == 0 {
        a
    } else {
        gcd(b, a % b)
    }
}

/// An indenting text builder; blocks opened with [`Text::open`] close with [`Text::close`].
#[derive(Default)]
struct Text {
    out: String,
    depth: usize,
}

impl Text {
    /// Writes one line at the current depth (an empty `s` writes a blank line).
    fn line(&mut self, s: &str) {
        if !s.is_empty() {
            for _ in 0..self.depth {
                self.out.push_str("    ");
            }
            self.out.push_str(s);
        }
        self.out.push('\n');
    }

    /// Writes `head {` and indents.
    fn open(&mut self, head: &str) {
        self.line(&format!("{head} {{"));
        self.depth += 1;
    }

    /// Dedents and writes `}`.
    fn close(&mut self) {
        self.depth -= 1;
        self.line("}");
    }

    /// Closes the open block with `} else {` and opens the else branch (the parser wants `else`
    /// on the line of the closing brace).
    fn else_open(&mut self, tail: &str) {
        self.depth -= 1;
        self.line(&format!("}} else {tail}{{"));
        self.depth += 1;
    }

    /// Writes `head {` `body` `}` on one line.
    fn block(&mut self, head: &str, body: &str) {
        self.line(&format!("{head} {{ {body} }}"));
    }

    /// The parameters and the `dz` × `dx` grid of data qubits shared by the rotated patch and
    /// the torus: `d[i, j]` at `(2i + 1, 2j + 1)`.
    fn grid_header(&mut self, spec: &GenSpec) {
        self.line(&format!("param dx = {}", spec.dx));
        self.line(&format!("param dz = {}", spec.dz));
        self.line(&format!("param rounds = {}", spec.rounds));
        self.line("");
        self.open("for i in 0..dz");
        self.block(
            "for j in 0..dx",
            "qubit d[i, j] at (2 * i + 1, 2 * j + 1) role data",
        );
        self.close();
    }

    fn finish(self) -> String {
        debug_assert_eq!(self.depth, 0, "unbalanced blocks");
        self.out
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn orders_parse() {
        let o: Order = "custom:nw,ne,sw,se/nw,sw,ne,se".parse().unwrap();
        assert_eq!(o.x_type, Order::hook_safe().x_type);
        assert_eq!(o.z_type, Order::hook_safe().z_type);
        assert!("custom:nw,ne,sw"
            .parse::<Order>()
            .unwrap_err()
            .contains("lists 3"));
        assert!("custom:nw,nw,sw,se"
            .parse::<Order>()
            .unwrap_err()
            .contains("does not visit `ne`"));
        assert!("zigzag".parse::<Order>().is_err());
    }

    #[test]
    fn bad_specs_explain() {
        let mut s = GenSpec::new(Family::Surface, 4);
        assert!(generate(&s).unwrap_err().0.contains("odd"));
        s = GenSpec::new(Family::Xzzx, 3);
        s.periodic = true;
        s.dx = 4;
        s.dz = 6;
        assert!(generate(&s).unwrap_err().0.contains("co-prime"));
        s = GenSpec::new(Family::Repetition, 3);
        s.basis = Some(LogicalBasis::X);
        assert!(generate(&s).unwrap_err().0.contains("--basis"));
        s = GenSpec::new(Family::Surface, 3);
        s.style = Some(Style::Product);
        s.entangler = Some(Entangler::Cx);
        assert!(generate(&s).unwrap_err().0.contains("--entangler"));
    }
}
