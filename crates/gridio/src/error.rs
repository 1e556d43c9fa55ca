//! Errors of the run reader: each names the file, the variable and what was expected.

use std::path::PathBuf;

/// Everything that can go wrong while opening or reading a run.
#[derive(Debug, thiserror::Error)]
pub enum GridError {
    /// A path given on the command line does not exist.
    #[error("input file {path}: not found")]
    FileNotFound { path: PathBuf },

    /// A glob pattern matched no file.
    #[error("input pattern '{pattern}' matched no file")]
    NoMatch { pattern: String },

    /// A glob pattern could not be parsed.
    #[error("input pattern '{pattern}' is not a valid glob: {message}")]
    BadPattern { pattern: String, message: String },

    /// The file exists but libnetcdf cannot open it (not NetCDF, truncated, no permission).
    #[error("input file {path}: cannot be opened as NetCDF ({message}); expected a readable, complete NetCDF-3 or NetCDF-4 file")]
    Unreadable { path: PathBuf, message: String },

    /// The file is shorter than its header says, or its header is damaged.
    #[error("input file {path}: damaged or truncated: {message}; expected a complete file (copy it again from the model's output, or leave it out of the run)")]
    Damaged { path: PathBuf, message: String },

    /// Required inputs (or what they hold) could not be found: one message lists every one,
    /// the candidates in the files and how to name them.
    #[error("{message}")]
    MissingRoles { roles: Vec<String>, message: String },

    /// Two files of one variable say different things that cannot both be honoured.
    #[error("variable '{variable}': {first} and {second} disagree: {message}")]
    FilesDisagree {
        variable: String,
        first: PathBuf,
        second: PathBuf,
        message: String,
    },

    /// Inputs whose values are implausible for their role (checked before any long work).
    #[error("{message}")]
    Implausible { message: String },

    /// A required variable was not found by standard name, CMIP/OMIP name or mapping.
    #[error("no {role} variable found in the run (looked for {looked_for}). Variables present: {present}. Map it with a variable mapping file entry `{role} = \"NAME\"` or the option --variable {role}=NAME")]
    MissingVariable {
        role: String,
        looked_for: String,
        present: String,
    },

    /// A variable named by the user mapping does not exist in any input file.
    #[error("the mapping names variable '{name}' for {role}, but no input file has it. Variables present: {present}")]
    MappedVariableAbsent {
        role: String,
        name: String,
        present: String,
    },

    /// A `units` attribute that acidscape cannot interpret.
    #[error("file {file}, variable '{variable}': {message}")]
    Units {
        file: PathBuf,
        variable: String,
        message: String,
    },

    /// Shapes or coordinate values that disagree between variables or files.
    #[error("file {file}, variable '{variable}': {message}")]
    Mismatch {
        file: PathBuf,
        variable: String,
        message: String,
    },

    /// Missing time steps between files.
    #[error("time gap in variable '{variable}' between {before} and {after}: {message}")]
    TimeGap {
        variable: String,
        before: PathBuf,
        after: PathBuf,
        message: String,
    },

    /// Time steps covered twice.
    #[error("time overlap in variable '{variable}' between {first} and {second}: {message}")]
    TimeOverlap {
        variable: String,
        first: PathBuf,
        second: PathBuf,
        message: String,
    },

    /// CF metadata that is absent or contradicts itself (axes, vertical coordinate, time).
    #[error("file {file}, variable '{variable}': {message}")]
    Metadata {
        file: PathBuf,
        variable: String,
        message: String,
    },

    /// A libnetcdf read failed after the file was opened.
    #[error("file {file}, variable '{variable}': read failed ({message})")]
    Read {
        file: PathBuf,
        variable: String,
        message: String,
    },

    /// A libnetcdf write into the output failed.
    #[error("output variable '{variable}': write failed ({message})")]
    Write { variable: String, message: String },

    /// The variable mapping file or a mapping override is wrong.
    #[error("variable mapping {source_name}: {message}")]
    Mapping {
        source_name: String,
        message: String,
    },

    /// A slab request outside the run.
    #[error("slab request out of range: {message}")]
    OutOfRange { message: String },
}

/// Shorthand for results of this crate.
pub type Result<T> = std::result::Result<T, GridError>;
