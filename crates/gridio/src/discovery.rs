//! Which variable of the run plays which role: the user mapping, then CF standard names,
//! CMIP/OMIP names and last the native names of model families (`native.rs`). When roles
//! are missing or what a variable holds is not stated, one message lists every problem at
//! once, with the candidate variables in the files and the exact options to name them.

use crate::catalog::{attr_text, dim_names, InputFile};
use crate::conversion::stated_temperature_kind;
use crate::error::{GridError, Result};
use crate::native;
use crate::roles::{Role, ALL_ROLES};
use crate::RunSpec;
use std::fmt::Write;

/// One non-coordinate variable of one file.
#[derive(Clone, Debug)]
pub(crate) struct Candidate {
    pub name: String,
    pub standard_name: Option<String>,
    pub long_name: Option<String>,
    pub units: Option<String>,
    pub dims: Vec<String>,
    pub file: usize,
}

/// Variables of all files, coordinate variables excluded.
pub(crate) fn catalogue(files: &[InputFile]) -> Vec<Candidate> {
    let mut out = Vec::new();
    for (f, file) in files.iter().enumerate() {
        for var in file.nc.variables() {
            let dims = dim_names(&var);
            let is_coordinate = dims.len() == 1 && dims[0] == var.name();
            if !is_coordinate {
                out.push(Candidate {
                    name: var.name(),
                    standard_name: attr_text(&var, "standard_name"),
                    long_name: attr_text(&var, "long_name"),
                    units: attr_text(&var, "units"),
                    dims,
                    file: f,
                });
            }
        }
    }
    out
}

/// Names (with standard names) of the catalogue, for messages.
pub(crate) fn present_list(catalog: &[Candidate]) -> String {
    let mut names: Vec<String> = Vec::new();
    for c in catalog {
        let label = match &c.standard_name {
            Some(s) => format!("{} ({s})", c.name),
            None => c.name.clone(),
        };
        if !names.contains(&label) {
            names.push(label);
        }
    }
    if names.is_empty() {
        "none".to_string()
    } else {
        names.join(", ")
    }
}

/// A role's variable: its name, how it was found and the files holding it.
#[derive(Clone, Debug)]
pub(crate) struct Found {
    pub name: String,
    pub found_by: String,
    pub holders: Vec<usize>,
}

/// What keeps a role from being read.
enum Problem {
    Missing(Role),
    Ambiguous(Role, Vec<String>),
    KindUnstated(Role, Found),
}

fn holders(catalog: &[Candidate], name: &str) -> Vec<usize> {
    let mut files: Vec<usize> = catalog
        .iter()
        .filter(|c| c.name == name)
        .map(|c| c.file)
        .collect();
    files.dedup();
    files
}

/// Finds the variable for a role: mapping, standard name, CMIP/OMIP name, native name.
fn find_role(
    role: Role,
    spec: &RunSpec,
    catalog: &[Candidate],
) -> Result<std::result::Result<Option<Found>, Vec<String>>> {
    if let Some(mapped) = spec.mapping.get(role.key()).filter(|m| !m.name.is_empty()) {
        let found = holders(catalog, &mapped.name);
        if found.is_empty() {
            return Err(GridError::MappedVariableAbsent {
                role: role.key().to_string(),
                name: mapped.name.clone(),
                present: present_list(catalog),
            });
        }
        return Ok(Ok(Some(Found {
            name: mapped.name.clone(),
            found_by: "user mapping".to_string(),
            holders: found,
        })));
    }
    for standard in role.standard_names() {
        if let Some(c) = catalog
            .iter()
            .find(|c| c.standard_name.as_deref() == Some(*standard))
        {
            return Ok(Ok(Some(Found {
                name: c.name.clone(),
                found_by: "CF standard_name".to_string(),
                holders: holders(catalog, &c.name),
            })));
        }
    }
    for cmip in role.cmip_names() {
        let found = holders(catalog, cmip);
        if !found.is_empty() {
            return Ok(Ok(Some(Found {
                name: cmip.to_string(),
                found_by: "CMIP/OMIP name".to_string(),
                holders: found,
            })));
        }
    }
    let present: Vec<&str> = native::names_of(role)
        .into_iter()
        .filter(|n| catalog.iter().any(|c| c.name == *n && c.dims.len() >= 2))
        .collect();
    match present.as_slice() {
        [] => Ok(Ok(None)),
        [one] => Ok(Ok(Some(Found {
            name: one.to_string(),
            found_by: format!("{} native name", native::families(role, one)),
            holders: holders(catalog, one),
        }))),
        many => Ok(Err(many.iter().map(|s| s.to_string()).collect())),
    }
}

/// Every role's variable; one error listing every missing role and unstated kind.
pub(crate) fn discover(
    spec: &RunSpec,
    catalog: &[Candidate],
    files: &[InputFile],
) -> Result<Vec<(Role, Found)>> {
    let mut found = Vec::new();
    let mut problems = Vec::new();
    for role in ALL_ROLES {
        match find_role(role, spec, catalog)? {
            Ok(Some(hit)) => {
                if role == Role::Temperature && !kind_is_stated(spec, catalog, &hit) {
                    problems.push(Problem::KindUnstated(role, hit.clone()));
                }
                found.push((role, hit));
            }
            Ok(None) if role.required() => problems.push(Problem::Missing(role)),
            Ok(None) => {}
            Err(names) => problems.push(Problem::Ambiguous(role, names)),
        }
    }
    if problems.is_empty() {
        return Ok(found);
    }
    Err(missing_roles_error(&problems, catalog, files, &found))
}

/// Whether the mapping, the attributes of the first file holding it or its family's
/// documentation say which temperature the variable holds.
fn kind_is_stated(spec: &RunSpec, catalog: &[Candidate], hit: &Found) -> bool {
    if spec
        .mapping
        .get(Role::Temperature.key())
        .is_some_and(|m| m.kind.is_some())
    {
        return true;
    }
    let Some(c) = catalog.iter().find(|c| c.name == hit.name) else {
        return false;
    };
    stated_temperature_kind(&c.name, c.standard_name.as_deref(), c.long_name.as_deref()).is_some()
}

fn looked_for(role: Role) -> String {
    let mut parts: Vec<String> = role
        .standard_names()
        .iter()
        .map(|s| format!("standard_name {s}"))
        .collect();
    let names: Vec<&str> = role
        .cmip_names()
        .iter()
        .copied()
        .chain(native::names_of(role))
        .collect();
    if !names.is_empty() {
        parts.push(format!("names {}", names.join(", ")));
    }
    parts.join(", ")
}

/// A candidate whose name or long_name suggests the role.
fn proposal<'c>(role: Role, candidates: &[&'c Candidate]) -> Option<&'c Candidate> {
    let fits = |text: &str| {
        let t = text.to_ascii_lowercase();
        role.hints()
            .iter()
            .any(|h| if h.len() <= 2 { t == *h } else { t.contains(h) })
    };
    candidates
        .iter()
        .copied()
        .find(|c| fits(&c.name) || c.long_name.as_deref().is_some_and(fits))
}

fn describe_candidate(c: &Candidate, catalog: &[Candidate], files: &[InputFile]) -> String {
    let count = holders(catalog, &c.name).len();
    let mut parts = Vec::new();
    if let Some(s) = &c.standard_name {
        parts.push(format!("standard_name {s}"));
    }
    if let Some(l) = &c.long_name {
        parts.push(format!("long_name \"{l}\""));
    }
    parts.push(match &c.units {
        Some(u) => format!("units \"{u}\""),
        None => "no units".to_string(),
    });
    parts.push(format!("dims ({})", c.dims.join(", ")));
    let place = if count > 1 {
        format!("in {count} files, first {}", files[c.file].path.display())
    } else {
        format!("in {}", files[c.file].path.display())
    };
    format!("  {}: {}; {place}", c.name, parts.join(", "))
}

/// How one problem is told: its line, the role key reported, the command-line options
/// and the mapping-file line proposed.
struct Told {
    line: String,
    role: String,
    options: Vec<String>,
    toml: String,
}

fn tell(problem: &Problem, candidates: &[&Candidate]) -> Told {
    let (role, hit) = match problem {
        Problem::KindUnstated(role, hit) => (*role, hit),
        Problem::Missing(role) | Problem::Ambiguous(role, _) => {
            return tell_missing(*role, problem, candidates)
        }
    };
    Told {
        line: format!(
            "  {}: variable '{}' (found by {}) does not say whether it holds potential, conservative or in-situ temperature: neither its standard_name nor its long_name says, and its model family writes both kinds",
            role.key(),
            hit.name,
            hit.found_by
        ),
        role: format!("{}.kind", role.key()),
        options: vec!["--variable temperature.kind=potential".to_string()],
        toml: "temperature = { kind = \"potential\" }".to_string(),
    }
}

fn tell_missing(role: Role, problem: &Problem, candidates: &[&Candidate]) -> Told {
    let (detail, proposed) = match problem {
        Problem::Ambiguous(_, names) => (
            format!(
                "several variables could be it ({}); name the right one",
                names.join(", ")
            ),
            names.first().cloned(),
        ),
        _ => (
            format!(
                "no {} variable found (looked for {})",
                role.key(),
                looked_for(role)
            ),
            proposal(role, candidates).map(|c| c.name.clone()),
        ),
    };
    let name = proposed.unwrap_or_else(|| "NAME".to_string());
    let units = candidates
        .iter()
        .find(|c| c.name == name)
        .and_then(|c| c.units.clone())
        .unwrap_or_else(|| role.example_units().to_string());
    let mut options = vec![
        format!("--variable {}={name}", role.key()),
        format!("--variable {}.units='{units}'", role.key()),
    ];
    let kind = match role {
        Role::Temperature => {
            options.push("--variable temperature.kind=potential".to_string());
            ", kind = \"potential\""
        }
        Role::Salinity => ", kind = \"practical\"",
        _ => "",
    };
    Told {
        line: format!("  {}: {detail}", role.key()),
        role: role.key().to_string(),
        options,
        toml: format!(
            "{} = {{ name = \"{name}\", units = \"{units}\"{kind} }}",
            role.key()
        ),
    }
}

/// The single message for everything that keeps the run's roles from being read.
fn missing_roles_error(
    problems: &[Problem],
    catalog: &[Candidate],
    files: &[InputFile],
    found: &[(Role, Found)],
) -> GridError {
    let used: Vec<&str> = found.iter().map(|(_, f)| f.name.as_str()).collect();
    let mut candidates: Vec<&Candidate> = Vec::new();
    for c in catalog {
        if c.dims.len() >= 2
            && !used.contains(&c.name.as_str())
            && !candidates.iter().any(|k| k.name == c.name)
        {
            candidates.push(c);
        }
    }
    let told: Vec<Told> = problems.iter().map(|p| tell(p, &candidates)).collect();
    let mut text = format!(
        "the run cannot be read yet: {} input(s) missing or not fully described:\n",
        problems.len()
    );
    for t in &told {
        let _ = writeln!(text, "{}", t.line);
    }
    let used_text: Vec<String> = found
        .iter()
        .map(|(role, f)| format!("{} ({})", f.name, role.key()))
        .collect();
    if !used_text.is_empty() {
        let _ = writeln!(text, "Variables already used: {}", used_text.join(", "));
    }
    if candidates.is_empty() {
        let _ = writeln!(text, "No other variables in the files could hold them.");
    } else {
        let _ = writeln!(text, "Variables in the files that no role uses yet:");
        const SHOWN: usize = 25;
        for c in candidates.iter().take(SHOWN) {
            let _ = writeln!(text, "{}", describe_candidate(c, catalog, files));
        }
        if candidates.len() > SHOWN {
            let _ = writeln!(text, "  ... and {} more", candidates.len() - SHOWN);
        }
    }
    let options: Vec<&str> = told
        .iter()
        .flat_map(|t| t.options.iter().map(String::as_str))
        .collect();
    let _ = writeln!(
        text,
        "Name them on the command line:\n  {}",
        options.join(" ")
    );
    let _ = writeln!(
        text,
        "or in a mapping file given with --variables FILE.toml:\n  [variables]"
    );
    for t in &told {
        let _ = writeln!(text, "  {}", t.toml);
    }
    let _ = write!(
        text,
        "(units only where a file's units attribute is missing or wrong; temperature kind: potential, conservative or in-situ; salinity kind: practical or absolute; a kind alone, e.g. --variable temperature.kind=conservative, is enough when the variable itself was found)"
    );
    GridError::MissingRoles {
        roles: told.into_iter().map(|t| t.role).collect(),
        message: text,
    }
}
