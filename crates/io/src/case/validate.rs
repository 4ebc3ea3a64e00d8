//! From the raw case to a validated [`Case`]: unit conversion and every
//! check that needs more than one key. Each refusal names the key and a fix.

use super::error::{closest, key_help};
use super::raw::*;
use super::shape;
use super::*;
use crate::units::{parse_quantity, Quantity, UnitError};
use twistmode_mesh::PolygonDefect;

type Result<T> = std::result::Result<T, CaseError>;

/// Turns a deserialisation error (unknown key, wrong type) into a [`CaseError`].
pub(crate) fn deserialise_error(e: serde_path_to_error::Error<toml::de::Error>) -> CaseError {
    let path = e.path().to_string();
    let message = e.into_inner().message().trim().to_string();
    let names = backticked(&message);
    let join = |parent: &str, child: &str| {
        if parent == "." || parent.is_empty() {
            child.to_string()
        } else {
            format!("{parent}.{child}")
        }
    };
    if message.starts_with("unknown field") {
        let unknown = names.first().cloned().unwrap_or_default();
        let key = if path.ends_with(&unknown) {
            path.clone()
        } else {
            join(&path, &unknown)
        };
        let valid: Vec<&str> = names.iter().skip(1).map(String::as_str).collect();
        let fix = match closest(&unknown, &valid) {
            Some(best) => format!(
                "did you mean '{}'? Valid keys here: {}",
                best,
                valid.join(", ")
            ),
            None => format!("remove it; valid keys here: {}", valid.join(", ")),
        };
        return CaseError::new(key, format!("unknown key '{unknown}'"), fix);
    }
    if message.starts_with("unknown variant") {
        let given = names.first().cloned().unwrap_or_default();
        let valid: Vec<&str> = names.iter().skip(1).map(String::as_str).collect();
        let fix = match closest(&given, &valid) {
            Some(best) => format!("did you mean \"{best}\"? Use one of: {}", valid.join(", ")),
            None => format!("use one of: {}", valid.join(", ")),
        };
        return CaseError::new(path, format!("unknown value \"{given}\""), fix);
    }
    let expected = key_help(&path).unwrap_or("the type described in docs/case-files.md");
    let message = if message.contains("did not match any variant") {
        "this value has the wrong form".to_string()
    } else {
        format!("wrong type or value ({message})")
    };
    CaseError::new(path, message, format!("give {expected}"))
}

/// The names between backticks in a serde message, in order.
fn backticked(message: &str) -> Vec<String> {
    message
        .split('`')
        .skip(1)
        .step_by(2)
        .map(str::to_string)
        .collect()
}

/// Formats a number with 4 significant digits, trailing zeros removed.
pub(crate) fn fmt_num(x: f64) -> String {
    if x == 0.0 || !x.is_finite() {
        return format!("{x}");
    }
    if !(1e-3..1e6).contains(&x.abs()) {
        let s = format!("{x:.3e}");
        let (mantissa, exponent) = s.split_once('e').unwrap_or((&s, "0"));
        let mantissa = mantissa.trim_end_matches('0').trim_end_matches('.');
        return format!("{mantissa}e{exponent}");
    }
    let digits = (3 - x.abs().log10().floor() as i32).clamp(0, 15) as usize;
    let s = format!("{x:.digits$}");
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    }
}

/// Length formatting in the case's unit.
struct Lengths(LengthUnit);

impl Lengths {
    fn show(&self, metres: f64) -> String {
        format!("{} {}", fmt_num(self.0.from_metres(metres)), self.0)
    }
    /// A finite, strictly positive length, converted to metres.
    fn positive(&self, key: &str, value: f64) -> Result<f64> {
        finite(key, value)?;
        if value <= 0.0 {
            return Err(CaseError::new(
                key,
                format!("{key} = {} must be positive", fmt_num(value)),
                format!("give a size > 0 in {}", self.0),
            ));
        }
        Ok(self.0.to_metres(value))
    }
    /// A finite length >= 0, converted to metres.
    fn non_negative(&self, key: &str, value: f64) -> Result<f64> {
        finite(key, value)?;
        if value < 0.0 {
            return Err(CaseError::new(
                key,
                format!("{key} = {} is negative", fmt_num(value)),
                format!("give a size >= 0 in {}", self.0),
            ));
        }
        Ok(self.0.to_metres(value))
    }
}

fn finite(key: &str, value: f64) -> Result<f64> {
    if value.is_finite() {
        Ok(value)
    } else {
        Err(CaseError::new(
            key,
            format!("{key} = {value} is not a finite number"),
            "give an ordinary number (not nan or inf)",
        ))
    }
}

fn missing(key: &str, fix: &str) -> CaseError {
    CaseError::new(key, "missing (this key is required)", fix)
}

/// Refuses a key that has no meaning in this context.
fn refuse<T>(value: &Option<T>, key: &str, why: &str, fix: &str) -> Result<()> {
    match value {
        Some(_) => Err(CaseError::new(key, format!("{key} {why}"), fix)),
        None => Ok(()),
    }
}

pub(crate) fn validate(raw: RawCase, base_dir: &Path) -> Result<Case> {
    let unit = length_unit(&raw.units)?;
    let len = Lengths(unit);
    let search_raw = raw.search.as_ref().ok_or_else(|| {
        missing(
            "search",
            "add a table [search] with near_frequency = \"6 GHz\" (or near_wavelength) and m (or beta)",
        )
    })?;
    let near_frequency = target_frequency(search_raw)?;
    let lambda0 = SPEED_OF_LIGHT / near_frequency;

    let body = body(raw.body.as_ref(), &len)?;
    let materials = materials(&raw.materials, &body)?;
    let section = section(raw.section.as_ref(), &len, &materials, base_dir)?;
    let surroundings = surroundings(&raw.surroundings, &len, lambda0)?;
    let mesh = mesh_settings(&raw.mesh, &body, &section)?;
    let midplane = midplane(&raw.boundary, &body, &section)?;
    let search = search(search_raw, &body, near_frequency, &len)?;
    check_placement(&body, &section, &surroundings, &raw.surroundings, &len)?;
    Ok(Case {
        length_unit: unit,
        body,
        section,
        materials,
        surroundings,
        mesh,
        search,
        midplane,
    })
}

fn length_unit(units: &Option<RawUnits>) -> Result<LengthUnit> {
    let fix = "add a table [units] with length = \"mm\" (one of nm, um, mm, m); every length in the file is in this unit";
    let text = units
        .as_ref()
        .and_then(|u| u.length.as_deref())
        .ok_or_else(|| missing("units.length", fix))?;
    text.parse().map_err(|_| {
        let names: Vec<&str> = LengthUnit::ALL.iter().map(|u| u.symbol()).collect();
        let hint = closest(&text.to_lowercase(), &names)
            .map(|b| format!("did you mean \"{b}\"? "))
            .unwrap_or_default();
        CaseError::new(
            "units.length",
            format!("unknown length unit \"{text}\""),
            format!("{hint}use one of nm, um, mm, m"),
        )
    })
}

/// The target frequency from exactly one of `near_frequency` / `near_wavelength`.
fn target_frequency(s: &RawSearch) -> Result<f64> {
    let (key, q, want_frequency) = match (&s.near_frequency, &s.near_wavelength) {
        (Some(q), None) => ("search.near_frequency", q, true),
        (None, Some(q)) => ("search.near_wavelength", q, false),
        (Some(_), Some(_)) => {
            return Err(CaseError::new(
                "search.near_frequency",
                "both search.near_frequency and search.near_wavelength are given",
                "keep exactly one of the two",
            ))
        }
        (None, None) => {
            return Err(missing(
                "search.near_frequency",
                "add near_frequency = \"6 GHz\" or near_wavelength = \"1.55 um\" to [search] (exactly one)",
            ))
        }
    };
    let example = if want_frequency {
        "\"6.2 GHz\""
    } else {
        "\"1.55 um\""
    };
    let text = match q {
        RawQuantity::Text(t) => t,
        RawQuantity::Number(x) => {
            return Err(CaseError::new(
                key,
                format!("{key} = {} has no unit", fmt_num(*x)),
                format!("write it as a string with its unit, e.g. {example}"),
            ))
        }
    };
    let value = parse_quantity(text).map_err(|e| {
        let fix = match &e {
            UnitError::UnknownUnit { .. } | UnitError::MissingUnit { .. } => {
                format!("write a number and a unit, e.g. {example}; frequency units Hz, kHz, MHz, GHz, THz; length units nm, um, mm, m")
            }
            UnitError::BadNumber { .. } => format!("start with a finite number, e.g. {example}"),
        };
        CaseError::new(key, e.to_string(), fix)
    })?;
    let hz = match (value, want_frequency) {
        (Quantity::Frequency(f), true) => f,
        (Quantity::Length(l), false) => SPEED_OF_LIGHT / l,
        (Quantity::Length(_), true) => {
            return Err(CaseError::new(
                key,
                format!("\"{text}\" is a length, not a frequency"),
                format!(
                    "use near_wavelength = \"{text}\" instead, or a frequency unit (Hz .. THz)"
                ),
            ))
        }
        (Quantity::Frequency(_), false) => {
            return Err(CaseError::new(
                key,
                format!("\"{text}\" is a frequency, not a wavelength"),
                format!(
                    "use near_frequency = \"{text}\" instead, or a length unit (nm, um, mm, m)"
                ),
            ))
        }
    };
    if !(hz.is_finite() && hz > 0.0) {
        return Err(CaseError::new(
            key,
            format!("{key} = \"{text}\" is not positive"),
            format!("give a positive value, e.g. {example}"),
        ));
    }
    Ok(hz)
}

fn body(raw: Option<&RawBody>, len: &Lengths) -> Result<Body> {
    let kinds = "one of \"revolution\", \"ring\", \"straight\"";
    let b = raw.ok_or_else(|| {
        missing(
            "body",
            &format!("add a table [body] with kind = \"ring\" ({kinds})"),
        )
    })?;
    let kind = b.kind.ok_or_else(|| {
        missing(
            "body.kind",
            &format!("add kind = \"ring\" ({kinds}) under [body]"),
        )
    })?;
    match kind {
        BodyKindName::Revolution => {
            refuse(
                &b.radius,
                "body.radius",
                "has no meaning for a body of revolution",
                "remove it and place the section with section.centre = [r, z]",
            )?;
            refuse(
                &b.half_turns,
                "body.half_turns",
                "applies to rings only",
                "remove it, or use kind = \"ring\" for a twisted ring",
            )?;
            refuse(
                &b.twist_rate,
                "body.twist_rate",
                "applies to straight guides only",
                "remove it",
            )?;
            Ok(Body::Revolution)
        }
        BodyKindName::Ring => {
            refuse(
                &b.twist_rate,
                "body.twist_rate",
                "applies to straight guides; a ring twists by body.half_turns per round trip",
                "remove it and set body.half_turns",
            )?;
            let radius = b.radius.ok_or_else(|| {
                missing(
                    "body.radius",
                    "add radius = ... under [body]: the distance from the ring axis to the section centre",
                )
            })?;
            Ok(Body::Ring {
                radius: len.positive("body.radius", radius)?,
                half_turns: b.half_turns.unwrap_or(0),
            })
        }
        BodyKindName::Straight => {
            refuse(
                &b.radius,
                "body.radius",
                "has no meaning for a straight guide",
                "remove it, or use kind = \"ring\"",
            )?;
            refuse(
                &b.half_turns,
                "body.half_turns",
                "applies to rings only",
                "remove it; a straight guide twists with body.twist_rate",
            )?;
            let rate = finite("body.twist_rate", b.twist_rate.unwrap_or(0.0))?;
            Ok(Body::Straight {
                twist_rate: rate / len.0.metres(),
            })
        }
    }
}

fn material_value(key: &str, raw: &RawMaterialValue) -> Result<Complex64> {
    let z = match raw {
        RawMaterialValue::Real(x) => Complex64::new(*x, 0.0),
        RawMaterialValue::Complex([re, im]) => Complex64::new(*re, *im),
        RawMaterialValue::Tensor(_) => {
            return Err(CaseError::new(
                key,
                format!(
                    "{key} must be a scalar here (a tensor is accepted only for body materials)"
                ),
                "give a number, or [re, im]",
            ))
        }
    };
    if !(z.re.is_finite() && z.im.is_finite()) {
        return Err(CaseError::new(
            key,
            format!("{key} is not finite"),
            "give ordinary numbers (not nan or inf)",
        ));
    }
    if z.norm() == 0.0 {
        return Err(CaseError::new(
            key,
            format!("{key} = 0 describes no material"),
            "give the relative value (1 for vacuum)",
        ));
    }
    if z.im < 0.0 {
        return Err(CaseError::new(
            key,
            format!(
                "{key} has a negative imaginary part ({}), which means gain under the exp(-i omega t) convention used here",
                fmt_num(z.im)
            ),
            format!(
                "for a lossy material give a positive imaginary part, e.g. [{}, {}] (loss tangent {})",
                z.re,
                -z.im,
                fmt_num((-z.im / z.re).abs())
            ),
        ));
    }
    Ok(z)
}

/// A body material's tensor: a scalar times the identity, or a 3x3 tensor in the
/// laboratory frame, checked for finite entries, invertibility, passivity (no gain) and
/// the symmetry the body kind needs.
fn material_tensor(key: &str, raw: &RawMaterialValue, body: &Body) -> Result<Tensor> {
    let RawMaterialValue::Tensor(rows) = raw else {
        return Ok(scalar_tensor(material_value(key, raw)?));
    };
    let mut t = scalar_tensor(Complex64::new(0.0, 0.0));
    for (i, row) in rows.iter().enumerate() {
        for (j, entry) in row.iter().enumerate() {
            t[i][j] = match *entry {
                RawEntry::Real(x) => Complex64::new(x, 0.0),
                RawEntry::Complex([re, im]) => Complex64::new(re, im),
            };
            if !(t[i][j].re.is_finite() && t[i][j].im.is_finite()) {
                return Err(CaseError::new(
                    key,
                    format!("{key} row {} column {} is not finite", i + 1, j + 1),
                    "give ordinary numbers (not nan or inf)",
                ));
            }
        }
    }
    let scale = t.iter().flatten().map(|z| z.norm()).fold(0.0, f64::max);
    let det = t[0][0] * (t[1][1] * t[2][2] - t[1][2] * t[2][1])
        - t[0][1] * (t[1][0] * t[2][2] - t[1][2] * t[2][0])
        + t[0][2] * (t[1][0] * t[2][1] - t[1][1] * t[2][0]);
    if scale == 0.0 || det.norm() <= 1e-12 * scale.powi(3) {
        return Err(CaseError::new(
            key,
            format!("{key} is singular (its determinant is zero)"),
            "give an invertible tensor; for vacuum-like directions use 1 on the diagonal",
        ));
    }
    // Passivity: the anti-Hermitian part (t - t^H) / (2i) must be positive
    // semi-definite (no direction with gain), i.e. all its principal minors >= 0.
    let h = |i: usize, j: usize| (t[i][j] - t[j][i].conj()) / Complex64::new(0.0, 2.0);
    let tol = 1e-12 * scale;
    let minors_ok = (0..3).all(|i| h(i, i).re >= -tol)
        && [(0, 1), (0, 2), (1, 2)]
            .iter()
            .all(|&(i, j)| (h(i, i) * h(j, j) - h(i, j) * h(j, i)).re >= -tol * scale)
        && {
            let d = h(0, 0) * (h(1, 1) * h(2, 2) - h(1, 2) * h(2, 1))
                - h(0, 1) * (h(1, 0) * h(2, 2) - h(1, 2) * h(2, 0))
                + h(0, 2) * (h(1, 0) * h(2, 1) - h(1, 1) * h(2, 0));
            d.re >= -tol * scale * scale
        };
    if !minors_ok {
        return Err(CaseError::new(
            key,
            format!("{key} describes gain in some direction under the exp(-i omega t) convention used here"),
            "give loss as positive imaginary parts on the diagonal (and a passive tensor: (t - t^H)/(2i) positive semi-definite)",
        ));
    }
    let same = |a: Complex64, b: Complex64| (a - b).norm() <= 1e-12 * scale;
    let zero = Complex64::new(0.0, 0.0);
    match body {
        Body::Ring { half_turns, .. } if *half_turns != 0 && t != scalar_tensor(t[0][0]) => {
            return Err(CaseError::new(
                key,
                format!("{key} is anisotropic, but the ring twists (body.half_turns = {half_turns}): a tensor fixed in the laboratory frame turns against the section, which this version does not model"),
                "give an isotropic value (a number, or [re, im]), or set body.half_turns = 0",
            ));
        }
        Body::Revolution | Body::Ring { .. } => {
            let invariant = same(t[0][2], zero)
                && same(t[1][2], zero)
                && same(t[2][0], zero)
                && same(t[2][1], zero)
                && same(t[0][0], t[1][1])
                && same(t[0][1], -t[1][0]);
            if !invariant {
                return Err(CaseError::new(
                    key,
                    format!(
                        "{key} is not invariant under rotation about the z axis, which a body of revolution or a ring needs (its modes would mix azimuthal orders)"
                    ),
                    "give [[a, b, 0], [-b, a, 0], [0, 0, c]] (uniaxial with its axis along z: b = 0; lossless gyrotropic: b = [0, g], i.e. i g)",
                ));
            }
        }
        Body::Straight { twist_rate } if *twist_rate != 0.0 && t != scalar_tensor(t[0][0]) => {
            return Err(CaseError::new(
                key,
                format!("{key} is anisotropic, but the guide twists (body.twist_rate != 0): the tensor would turn with the section, which this version does not model"),
                "give an isotropic value (a number, or [re, im]), or set body.twist_rate = 0",
            ));
        }
        Body::Straight { .. } => {}
    }
    Ok(t)
}

fn materials(
    raw: &BTreeMap<String, RawMaterial>,
    body: &Body,
) -> Result<BTreeMap<String, Material>> {
    raw.iter()
        .map(|(name, m)| {
            let eps_key = format!("materials.{name}.epsilon");
            let epsilon = m.epsilon.as_ref().ok_or_else(|| {
                missing(
                    &eps_key,
                    &format!("add epsilon = ... under [materials.{name}] (a number, or [re, im])"),
                )
            })?;
            let mu = match &m.mu {
                Some(v) => material_tensor(&format!("materials.{name}.mu"), v, body)?,
                None => scalar_tensor(Complex64::new(1.0, 0.0)),
            };
            Ok((
                name.clone(),
                Material {
                    epsilon: material_tensor(&eps_key, epsilon, body)?,
                    mu,
                },
            ))
        })
        .collect()
}

/// Keys that belong to each shape (besides `shape` itself).
fn shape_keys(shape: ShapeName) -> &'static [&'static str] {
    match shape {
        ShapeName::Rectangle => &["width", "thickness", "corner_radius", "centre", "material"],
        ShapeName::Disc => &["radius", "centre", "material"],
        ShapeName::Ellipse => &["semi_axes", "centre", "material"],
        ShapeName::Polygon => &["vertices", "centre", "material"],
        ShapeName::Gmsh => &["file"],
    }
}

fn shape_name(shape: ShapeName) -> &'static str {
    match shape {
        ShapeName::Rectangle => "rectangle",
        ShapeName::Disc => "disc",
        ShapeName::Ellipse => "ellipse",
        ShapeName::Polygon => "polygon",
        ShapeName::Gmsh => "gmsh",
    }
}

fn section(
    raw: Option<&RawSection>,
    len: &Lengths,
    materials: &BTreeMap<String, Material>,
    base_dir: &Path,
) -> Result<Section> {
    let shapes = "one of \"rectangle\", \"disc\", \"ellipse\", \"polygon\", \"gmsh\"";
    let s = raw.ok_or_else(|| {
        missing(
            "section",
            &format!("add a table [section] with shape = \"rectangle\" ({shapes}) and its sizes"),
        )
    })?;
    let kind = s.shape.ok_or_else(|| {
        missing(
            "section.shape",
            &format!("add shape = \"rectangle\" ({shapes}) under [section]"),
        )
    })?;
    let given: [(&str, bool); 9] = [
        ("width", s.width.is_some()),
        ("thickness", s.thickness.is_some()),
        ("radius", s.radius.is_some()),
        ("corner_radius", s.corner_radius.is_some()),
        ("centre", s.centre.is_some()),
        ("material", s.material.is_some()),
        ("semi_axes", s.semi_axes.is_some()),
        ("vertices", s.vertices.is_some()),
        ("file", s.file.is_some()),
    ];
    let allowed = shape_keys(kind);
    if let Some((key, _)) = given.iter().find(|(k, g)| *g && !allowed.contains(k)) {
        return Err(CaseError::new(
            format!("section.{key}"),
            format!(
                "section.{key} has no meaning for shape = \"{}\"",
                shape_name(kind)
            ),
            format!(
                "remove it ({} takes {})",
                shape_name(kind),
                allowed.join(", ")
            ),
        ));
    }
    let need = |value: Option<f64>, key: &str, what: &str| -> Result<f64> {
        let v = value.ok_or_else(|| {
            missing(
                &format!("section.{key}"),
                &format!("add {key} = ... under [section]: {what}"),
            )
        })?;
        len.positive(&format!("section.{key}"), v)
    };
    let shape = match kind {
        ShapeName::Gmsh => {
            let file = s.file.as_ref().ok_or_else(|| {
                missing(
                    "section.file",
                    "add file = \"section.msh\" under [section] (a Gmsh mesh, coordinates in units.length)",
                )
            })?;
            return Ok(Section {
                outline: SectionOutline::Gmsh {
                    file: base_dir.join(file),
                },
                centre: [0.0, 0.0],
            });
        }
        ShapeName::Rectangle => {
            let width = need(s.width, "width", "the extent along u")?;
            let thickness = need(s.thickness, "thickness", "the extent along v")?;
            let corner_radius =
                len.non_negative("section.corner_radius", s.corner_radius.unwrap_or(0.0))?;
            if corner_radius > 0.5 * width.min(thickness) {
                return Err(CaseError::new(
                    "section.corner_radius",
                    format!(
                        "section.corner_radius = {} exceeds half the smaller side ({})",
                        len.show(corner_radius),
                        len.show(0.5 * width.min(thickness))
                    ),
                    "reduce it (half the smaller side gives fully rounded ends)",
                ));
            }
            SectionShape::Rectangle {
                width,
                thickness,
                corner_radius,
            }
        }
        ShapeName::Disc => {
            let r = need(s.radius, "radius", "the disc radius")?;
            SectionShape::Ellipse { a: r, b: r }
        }
        ShapeName::Ellipse => {
            let [a, b] = s.semi_axes.ok_or_else(|| {
                missing(
                    "section.semi_axes",
                    "add semi_axes = [a, b] under [section] (a along u, b along v)",
                )
            })?;
            SectionShape::Ellipse {
                a: len.positive("section.semi_axes", a)?,
                b: len.positive("section.semi_axes", b)?,
            }
        }
        ShapeName::Polygon => polygon(s.vertices.as_deref(), len)?,
    };
    let material = s.material.clone().ok_or_else(|| {
        missing(
            "section.material",
            "add material = \"NAME\" under [section] and a table [materials.NAME] with its epsilon",
        )
    })?;
    if !materials.contains_key(&material) {
        let names: Vec<&str> = materials.keys().map(String::as_str).collect();
        let fix = match closest(&material, &names) {
            Some(best) => format!(
                "did you mean \"{best}\"? Defined materials: {}",
                names.join(", ")
            ),
            None => format!(
                "add a table [materials.{material}] with epsilon = ...{}",
                if names.is_empty() {
                    String::new()
                } else {
                    format!(", or use one of: {}", names.join(", "))
                }
            ),
        };
        return Err(CaseError::new(
            "section.material",
            format!("no material named \"{material}\""),
            fix,
        ));
    }
    let [cu, cv] = s.centre.unwrap_or([0.0, 0.0]);
    let centre = [
        len.0.to_metres(finite("section.centre", cu)?),
        len.0.to_metres(finite("section.centre", cv)?),
    ];
    Ok(Section {
        outline: SectionOutline::Shape { shape, material },
        centre,
    })
}

fn polygon(vertices: Option<&[[f64; 2]]>, len: &Lengths) -> Result<SectionShape> {
    let key = "section.vertices";
    let v = vertices.ok_or_else(|| {
        missing(
            key,
            "add vertices = [[u0, v0], [u1, v1], [u2, v2], ...] under [section], relative to section.centre",
        )
    })?;
    if v.len() < 3 {
        return Err(CaseError::new(
            key,
            format!("a polygon needs at least 3 vertices, got {}", v.len()),
            "list the outline's corners in order",
        ));
    }
    let mut pts = Vec::with_capacity(v.len());
    for p in v {
        pts.push([
            len.0.to_metres(finite(key, p[0])?),
            len.0.to_metres(finite(key, p[1])?),
        ]);
    }
    // The mesher's own check (twistmode_mesh::polygon); the fixes are the reader's.
    let defect = match twistmode_mesh::check_polygon(&pts) {
        Ok(_) => return Ok(SectionShape::Polygon { vertices: pts }),
        Err(defect) => defect,
    };
    let fix = match defect {
        PolygonDefect::TooFewVertices { .. } => "list the outline's corners in order",
        PolygonDefect::ZeroArea => "give vertices that enclose a region",
        PolygonDefect::SidesMeet { .. } => {
            "list the vertices in order around the outline, without repeating the first one at the end"
        }
        _ => "give finite coordinates",
    };
    Err(CaseError::new(key, defect.to_string(), fix))
}

fn surroundings(raw: &RawSurroundings, len: &Lengths, lambda0: f64) -> Result<SurroundingMedium> {
    match raw.kind.unwrap_or(SurroundingsKindName::Open) {
        SurroundingsKindName::Metal => {
            let why = "has no meaning with surroundings.kind = \"metal\" (the section outline is the wall)";
            refuse(&raw.epsilon, "surroundings.epsilon", why, "remove it")?;
            refuse(&raw.padding, "surroundings.padding", why, "remove it")?;
            refuse(
                &raw.pml_thickness,
                "surroundings.pml_thickness",
                why,
                "remove it",
            )?;
            Ok(SurroundingMedium::Metal)
        }
        SurroundingsKindName::Open => {
            let epsilon = match &raw.epsilon {
                Some(v) => material_value("surroundings.epsilon", v)?,
                None => Complex64::new(1.0, 0.0),
            };
            let local = lambda0 / epsilon.norm().sqrt();
            let padding = match raw.padding {
                Some(p) => len.positive("surroundings.padding", p)?,
                None => DEFAULT_LAYER_WAVELENGTHS * local,
            };
            let pml_thickness = match raw.pml_thickness {
                Some(p) => len.non_negative("surroundings.pml_thickness", p)?,
                None => DEFAULT_LAYER_WAVELENGTHS * local,
            };
            Ok(SurroundingMedium::Open {
                epsilon,
                padding,
                pml_thickness,
            })
        }
    }
}

fn outline_shape(section: &Section) -> Option<&SectionShape> {
    match &section.outline {
        SectionOutline::Shape { shape, .. } => Some(shape),
        SectionOutline::Gmsh { .. } => None,
    }
}

fn mesh_settings(raw: &RawMesh, body: &Body, section: &Section) -> Result<MeshSettings> {
    let order = match raw.order.unwrap_or(2) {
        1 => GeometryOrder::Linear,
        2 => GeometryOrder::Quadratic,
        other => {
            return Err(CaseError::new(
                "mesh.order",
                format!("mesh.order = {other} is not available"),
                "use 1 or 2",
            ))
        }
    };
    let resolution = finite(
        "mesh.resolution",
        raw.resolution.unwrap_or(DEFAULT_RESOLUTION),
    )?;
    if resolution < 2.0 {
        return Err(CaseError::new(
            "mesh.resolution",
            format!(
                "mesh.resolution = {} elements per wavelength cannot represent a wave",
                fmt_num(resolution)
            ),
            format!("use at least 2; {DEFAULT_RESOLUTION} is the default"),
        ));
    }
    let odd_ring = matches!(body, Body::Ring { half_turns, .. } if half_turns % 2 != 0);
    let pi_symmetric = match raw.pi_symmetric {
        // Twisted rings split into two sectors of half the size when the mesh has the
        // pi symmetry, so it is the default wherever the section allows it.
        None => {
            body.is_twisted_ring()
                && outline_shape(section).is_some_and(shape::is_pi_symmetric)
        }
        Some(false) if odd_ring && outline_shape(section).is_some() => {
            return Err(CaseError::new(
                "mesh.pi_symmetric",
                "a band with an odd number of half turns is solved in its physical sector, which needs a mesh symmetric under rotation by pi",
                "remove mesh.pi_symmetric (the default meshes the section symmetrically)",
            ))
        }
        Some(false) => false,
        Some(true) => {
            if matches!(body, Body::Revolution) {
                return Err(CaseError::new(
                    "mesh.pi_symmetric",
                    "a body of revolution's (r, z) domain cannot be rotated by pi about the section",
                    "remove mesh.pi_symmetric (or set it to false)",
                ));
            }
            match outline_shape(section) {
                None => {
                    return Err(CaseError::new(
                        "mesh.pi_symmetric",
                        "a Gmsh section is used as it is and cannot be made pi-symmetric here",
                        "remove mesh.pi_symmetric, or make the Gmsh mesh symmetric yourself",
                    ))
                }
                Some(shape) if !shape::is_pi_symmetric(shape) => {
                    return Err(CaseError::new(
                        "mesh.pi_symmetric",
                        "the section is not symmetric under rotation by pi about its centre",
                        "set mesh.pi_symmetric = false, or give a section with that symmetry",
                    ))
                }
                Some(_) => true,
            }
        }
    };
    // The mirror v -> -v makes a twisted ring's pencils complex-symmetric (half the
    // factor memory); it needs the section symmetric under both mirrors.
    let mirror_possible = pi_symmetric
        && outline_shape(section).is_some_and(|s| {
            shape::is_mirror_symmetric_in_v(s) && shape::is_mirror_symmetric_in_u(s)
        });
    let mirror_symmetric = match raw.mirror_symmetric {
        // Opt-in: measured on the example band, the symmetric factor is 3-9x smaller
        // but the mirror-adapted assembly and analysis cost more than they save below
        // about 16 elements per wavelength, and less above (docs/performance.md).
        None | Some(false) => false,
        Some(true) if mirror_possible && body.is_twisted_ring() => true,
        Some(true) => {
            return Err(CaseError::new(
                "mesh.mirror_symmetric",
                "a mirror-symmetric mesh serves twisted rings, and needs a built-in section symmetric under v -> -v and u -> -u, meshed with mesh.pi_symmetric",
                "remove mesh.mirror_symmetric (or set it to false)",
            ))
        }
    };
    Ok(MeshSettings {
        order,
        resolution,
        pi_symmetric,
        mirror_symmetric,
    })
}

fn midplane(raw: &RawBoundary, body: &Body, section: &Section) -> Result<Midplane> {
    let value = match raw.midplane.unwrap_or(MidplaneName::None) {
        MidplaneName::None => return Ok(Midplane::None),
        MidplaneName::Electric => Midplane::Electric,
        MidplaneName::Magnetic => Midplane::Magnetic,
    };
    if !matches!(body, Body::Revolution) {
        return Err(CaseError::new(
            "boundary.midplane",
            "boundary.midplane applies to bodies of revolution only",
            "remove it, or use body.kind = \"revolution\"",
        ));
    }
    let symmetric = match outline_shape(section) {
        Some(shape) => section.centre[1] == 0.0 && shape::is_mirror_symmetric_in_v(shape),
        None => false,
    };
    if !symmetric {
        return Err(CaseError::new(
            "boundary.midplane",
            "a midplane condition needs a section that is mirror-symmetric about z = 0 (built-in shape, section.centre = [r, 0])",
            "set boundary.midplane = \"none\", or centre a symmetric section on z = 0",
        ));
    }
    Ok(value)
}

fn search(s: &RawSearch, body: &Body, near_frequency: f64, len: &Lengths) -> Result<Search> {
    let count = s.count.unwrap_or(DEFAULT_COUNT as u32);
    if count == 0 {
        return Err(CaseError::new(
            "search.count",
            "search.count = 0 asks for no modes",
            format!("use at least 1 ({DEFAULT_COUNT} is the default)"),
        ));
    }
    let (order, harmonics) = match body {
        Body::Straight { .. } => {
            refuse(
                &s.m,
                "search.m",
                "applies to revolution bodies and rings; a straight guide is solved for a propagation constant",
                "remove it and give search.beta (rad per units.length)",
            )?;
            refuse(
                &s.harmonics,
                "search.harmonics",
                "applies to twisted rings only",
                "remove it",
            )?;
            refuse(
                &s.max_harmonics,
                "search.max_harmonics",
                "applies to twisted rings only",
                "remove it",
            )?;
            let beta = s.beta.ok_or_else(|| {
                missing(
                    "search.beta",
                    "add beta = ... under [search]: the propagation constant, rad per units.length",
                )
            })?;
            let beta = finite("search.beta", beta)? / len.0.metres();
            (ModeOrder::Propagation { beta }, (0, None))
        }
        Body::Revolution | Body::Ring { .. } => {
            refuse(
                &s.beta,
                "search.beta",
                "applies to straight guides; revolution bodies and rings are solved for an azimuthal order",
                "remove it and give search.m",
            )?;
            let m = s.m.ok_or_else(|| {
                missing(
                    "search.m",
                    "add m = ... under [search]: the azimuthal order (field varies as exp(i m phi))",
                )
            })?;
            (
                ModeOrder::Azimuthal(azimuthal_order(m, body)?),
                harmonics(s, body)?,
            )
        }
    };
    Ok(Search {
        order,
        near_frequency,
        count: count as usize,
        harmonics: harmonics.0,
        max_harmonics: harmonics.1,
        near_q: near_q(s)?,
        harmonic_tolerance: harmonic_tolerance(s, body)?,
    })
}

/// `search.tolerance`: twisted rings only, `0 < tol <= 0.1`.
fn harmonic_tolerance(s: &RawSearch, body: &Body) -> Result<f64> {
    let Some(tol) = s.tolerance else {
        return Ok(DEFAULT_HARMONIC_TOLERANCE);
    };
    if !body.is_twisted_ring() {
        return Err(CaseError::new(
            "search.tolerance",
            "search.tolerance sets the harmonic convergence of twisted rings, and this body is not one",
            "remove it",
        ));
    }
    let tol = finite("search.tolerance", tol)?;
    if !(tol > 0.0 && tol <= 0.1) {
        return Err(CaseError::new(
            "search.tolerance",
            format!("search.tolerance = {} is outside (0, 0.1]", fmt_num(tol)),
            format!("give a relative change such as 1e-6 (the default is {DEFAULT_HARMONIC_TOLERANCE:e})"),
        ));
    }
    Ok(tol)
}

/// `search.near_q`: any finite Q > 0 (Q = Re k0 / (2 |Im k0|) of a radiating mode).
fn near_q(s: &RawSearch) -> Result<Option<f64>> {
    let Some(q) = s.near_q else {
        return Ok(None);
    };
    let q = finite("search.near_q", q)?;
    if q <= 0.0 {
        return Err(CaseError::new(
            "search.near_q",
            format!(
                "search.near_q = {} is not a quality factor (Q = Re k0 / (2 |Im k0|) > 0)",
                fmt_num(q)
            ),
            "give the expected Q of the resonances, e.g. near_q = 5 for a leaky one, \
             or remove the key to search near the real frequency",
        ));
    }
    Ok(Some(q))
}

fn azimuthal_order(m: f64, body: &Body) -> Result<AzimuthalOrder> {
    let m = finite("search.m", m)?;
    let twice = 2.0 * m;
    if twice.fract() != 0.0 || twice.abs() > 1e15 {
        return Err(CaseError::new(
            "search.m",
            format!(
                "search.m = {} is neither an integer nor a half-integer",
                fmt_num(m)
            ),
            "give a whole number such as 12 (or 12.5 for a ring with odd body.half_turns)",
        ));
    }
    let order = AzimuthalOrder::from_twice(twice as i64);
    let odd_ring = matches!(body, Body::Ring { half_turns, .. } if half_turns % 2 != 0);
    if order.is_half_integer() && !odd_ring {
        return Err(CaseError::new(
            "search.m",
            format!(
                "search.m = {} is a half-integer, which only a ring with an odd number of half turns allows",
                fmt_num(m)
            ),
            "give a whole number",
        ));
    }
    Ok(order)
}

/// `search.harmonics` (a count, or "auto") and `search.max_harmonics`:
/// `(first K, largest K for auto)`.
fn harmonics(s: &RawSearch, body: &Body) -> Result<(u32, Option<u32>)> {
    let twisted = body.is_twisted_ring();
    if !twisted {
        refuse(
            &s.max_harmonics,
            "search.max_harmonics",
            "applies to twisted rings with search.harmonics = \"auto\" only",
            "remove it",
        )?;
    }
    let count = match &s.harmonics {
        None => None,
        Some(RawHarmonics::Count(k)) => Some(*k),
        Some(RawHarmonics::Word(w)) if w == "auto" => {
            if !twisted {
                return Err(CaseError::new(
                    "search.harmonics",
                    "search.harmonics = \"auto\" applies to twisted rings only",
                    "remove it",
                ));
            }
            let max = s.max_harmonics.unwrap_or(DEFAULT_MAX_HARMONICS);
            if max < 1 {
                return Err(CaseError::new(
                    "search.max_harmonics",
                    "search.max_harmonics = 0 leaves no window to try",
                    format!("use at least 1 (default {DEFAULT_MAX_HARMONICS})"),
                ));
            }
            return Ok((AUTO_FIRST_HARMONICS.min(max), Some(max)));
        }
        Some(RawHarmonics::Word(w)) => {
            return Err(CaseError::new(
                "search.harmonics",
                format!("search.harmonics = \"{w}\" is neither a whole number nor \"auto\""),
                "give a window half-width such as 4, or \"auto\" to raise it until search.tolerance is met",
            ))
        }
    };
    refuse(
        &s.max_harmonics,
        "search.max_harmonics",
        "limits search.harmonics = \"auto\" only",
        "set search.harmonics = \"auto\", or remove it",
    )?;
    let k = match (body, count) {
        (Body::Revolution, Some(_)) => Err(CaseError::new(
            "search.harmonics",
            "search.harmonics applies to twisted rings only; a body of revolution needs one harmonic",
            "remove it",
        )),
        (Body::Ring { half_turns: 0, .. }, Some(k)) if k > 0 => Err(CaseError::new(
            "search.harmonics",
            format!("search.harmonics = {k} on an untwisted ring (body.half_turns = 0): one harmonic is exact there"),
            "remove it, or give a nonzero body.half_turns for a twisted ring",
        )),
        (Body::Ring { half_turns, .. }, Some(0)) if *half_turns != 0 => Err(CaseError::new(
            "search.harmonics",
            "search.harmonics = 0 on a twisted ring averages the bend away and gives wrong frequencies and Q",
            format!("use at least 1 (default {DEFAULT_TWISTED_HARMONICS}) and compare with one more to see convergence"),
        )),
        (Body::Ring { half_turns, .. }, None) if *half_turns != 0 => Ok(DEFAULT_TWISTED_HARMONICS),
        (_, k) => Ok(k.unwrap_or(0)),
    }?;
    Ok((k, None))
}

/// Checks that need the body, the section and the surroundings together.
fn check_placement(
    body: &Body,
    section: &Section,
    surroundings: &SurroundingMedium,
    raw: &RawSurroundings,
    len: &Lengths,
) -> Result<()> {
    let Some(shape) = outline_shape(section) else {
        return Ok(()); // Gmsh sections are checked when the mesh is read.
    };
    match *body {
        Body::Ring { radius, half_turns } => {
            if section.centre != [0.0, 0.0] {
                return Err(CaseError::new(
                    "section.centre",
                    "a ring's section is placed by body.radius; section.centre must be [0, 0]",
                    "remove section.centre and set body.radius to the distance from the axis to the section centre",
                ));
            }
            if half_turns % 2 != 0 && !shape::is_pi_symmetric(shape) {
                return Err(CaseError::new(
                    "body.half_turns",
                    format!("a ring with an odd number of half turns ({half_turns}) closes on itself only if its section is symmetric under rotation by pi, and this one is not"),
                    "use an even body.half_turns, or a section with that symmetry (rectangle, ellipse, pi-symmetric polygon)",
                ));
            }
            let r_section = shape::bounding_radius(shape);
            let (reach, detail, fix) = match *surroundings {
                SurroundingMedium::Metal => (
                    if half_turns == 0 {
                        -shape::bounding_box(shape)[0]
                    } else {
                        r_section
                    },
                    String::new(),
                    "increase body.radius or shrink the section".to_string(),
                ),
                SurroundingMedium::Open {
                    padding,
                    pml_thickness,
                    ..
                } => {
                    let defaults = raw.padding.is_none() || raw.pml_thickness.is_none();
                    (
                        r_section + padding + pml_thickness,
                        format!(
                            " (section {}, padding {}, PML {})",
                            len.show(r_section),
                            len.show(padding),
                            len.show(pml_thickness)
                        ),
                        format!(
                            "increase body.radius or reduce surroundings.padding{}",
                            if defaults {
                                " and surroundings.pml_thickness (their defaults, half a local wavelength each, are too large here: set them explicitly)"
                            } else {
                                " or surroundings.pml_thickness"
                            }
                        ),
                    )
                }
            };
            if reach >= radius {
                return Err(CaseError::new(
                    "body.radius",
                    format!(
                        "body.radius = {} but the section reaches {} from its centre{detail}, so the model would cross the ring axis",
                        len.show(radius),
                        len.show(reach)
                    ),
                    fix,
                ));
            }
        }
        Body::Revolution => {
            let u_min = section.centre[0] + shape::bounding_box(shape)[0];
            if u_min < 0.0 {
                let on_axis = section.centre[0] == 0.0 && shape::is_mirror_symmetric_in_u(shape);
                if !on_axis {
                    return Err(CaseError::new(
                        "section.centre",
                        format!(
                            "the section reaches r = {}, across the axis, without being centred on it",
                            len.show(u_min)
                        ),
                        "move the section to r >= 0 (raise section.centre[0]), or centre a shape symmetric about the axis on it (section.centre = [0, z]); only its r >= 0 half is used",
                    ));
                }
            }
        }
        Body::Straight { .. } => {}
    }
    Ok(())
}

#[cfg(test)]
mod near_q_tests {
    use crate::case::Case;

    const SPHERE: &str = r#"
[units]
length = "um"
[body]
kind = "revolution"
[section]
shape = "disc"
radius = 1.0
centre = [0.0, 0.0]
material = "glass"
[materials.glass]
epsilon = 2.25
[search]
m = 1
near_frequency = "200 THz"
"#;

    fn with(line: &str) -> Result<Case, crate::case::CaseError> {
        Case::from_toml_str(&format!("{SPHERE}{line}\n"), &[])
    }

    #[test]
    fn near_q_makes_the_target_complex() {
        let plain = with("").unwrap();
        assert_eq!(plain.search.near_q, None);
        let k0 = plain.search.k0();
        assert_eq!(plain.search.complex_k0(), (k0, 0.0));
        let leaky = with("near_q = 0.5").unwrap();
        // Q = Re k0 / (2 |Im k0|) (DEVELOPERS.md convention), so Q = 0.5 gives Im k0 = -Re k0.
        let (re, im) = leaky.search.complex_k0();
        assert_eq!(re, k0);
        assert!((im + k0).abs() <= 1e-12 * k0);
    }

    #[test]
    fn near_q_refuses_what_is_no_quality_factor() {
        for bad in ["near_q = 0", "near_q = -3", "near_q = nan", "near_q = inf"] {
            let e = with(bad).expect_err(bad);
            assert_eq!(e.key, "search.near_q", "{bad}: {e:?}");
        }
        let e = with("near_q = -3").unwrap_err();
        assert!(
            e.fix.contains("near_q = 5") && e.fix.contains("remove"),
            "{e:?}"
        );
    }
}
