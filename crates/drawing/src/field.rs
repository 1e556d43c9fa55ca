//! What maps and sections share: the output checked, the file opened, the variable found and
//! understood, its time step and colours, and the words around it.

use crate::caption;
use crate::error::{DrawError, Result};
use crate::naming::Meaning;
use crate::options::{colouring, ColourRequest, Page, PageRequest, WhenRequest};
use crate::source::Source;
use crate::title;
use crate::when::{choose_step, Moment};
use acidscape_figures::{Captions, Colouring};
use acidscape_gridio::FieldInfo;
use std::path::{Path, PathBuf};

/// A field of an output, chosen and checked.
pub(crate) struct ChosenField {
    pub page: Page,
    pub source: Source,
    pub info: FieldInfo,
    pub meaning: Meaning,
    pub moment: Moment,
    pub colouring: Colouring,
    /// Whose values: the run's name, or e.g. "steep minus moderate".
    run_words: String,
}

/// What maps and sections share in a request: the file, the variable, its time step, the
/// colours, the run's name and the page.
#[derive(Clone, Debug)]
pub struct FieldRequest {
    /// An output of `compute` or `compare`.
    pub file: PathBuf,
    /// The variable to draw.
    pub variable: String,
    /// The time step or window.
    pub when: WhenRequest,
    /// Palette and colour range.
    pub colours: ColourRequest,
    /// The run's name in the title (outputs of compute; default: the file's stem).
    pub run_label: Option<String>,
    /// Output and page.
    pub page: PageRequest,
}

impl FieldRequest {
    /// A request for `variable` of `file` written to `output`, with every other option left
    /// to its default.
    pub fn new(file: impl Into<PathBuf>, variable: &str, output: impl Into<PathBuf>) -> Self {
        Self {
            file: file.into(),
            variable: variable.to_string(),
            when: WhenRequest::default(),
            colours: ColourRequest::default(),
            run_label: None,
            page: PageRequest::new(output),
        }
    }
}

impl ChosenField {
    /// Checks the output path, opens the file, finds the variable and resolves its time step
    /// and colouring, before any field is read.
    pub(crate) fn new(request: &FieldRequest, needs_levels: bool) -> Result<ChosenField> {
        let page = Page::new(&request.page, &[&request.file])?;
        let source = Source::open(&request.file)?;
        let info = source.field(&request.variable)?.clone();
        if needs_levels && !info.has_levels {
            return Err(DrawError::variable(
                source.path(),
                &info.name,
                "is a 2-D field; a section needs a 3-D field (e.g. omega_aragonite)",
            ));
        }
        let meaning = Meaning::of(&info.name, source.compared.as_ref());
        let moment = choose_step(&source, &info, &meaning, &request.when)?;
        let colouring = colouring(&request.colours, meaning.is_signed())?;
        let run_label = request
            .run_label
            .clone()
            .unwrap_or_else(|| file_stem(&request.file));
        let run_words = meaning.run_words(&run_label, source.compared.as_ref());
        Ok(ChosenField {
            page,
            source,
            info,
            meaning,
            moment,
            colouring,
            run_words,
        })
    }

    /// Title (the user's, or run · `what` · time), the quantity with its units for the colour
    /// bar (differences with a Δ), no caption yet.
    pub(crate) fn captions(&self, what: impl Fn(&str) -> String) -> Captions {
        let title = self.page.title.clone().unwrap_or_else(|| {
            title(&[
                self.run_words.clone(),
                what(&self.meaning.title_quantity(&self.info)),
                self.moment.words.clone(),
            ])
        });
        let units = self.meaning.units(&self.info);
        Captions::new(title, self.meaning.quantity(&self.info), units)
    }

    /// The caption: synthetic data said first, the user's note, the constants, `extra`.
    pub(crate) fn caption(&self, extra: Option<String>) -> String {
        caption::join(&[
            caption::synthetic(&self.source.file),
            self.page.note.clone(),
            Some(caption::constants(&self.source.file)),
            extra,
        ])
    }
}

/// The file's name without its extension, as the run's name of a compute output.
fn file_stem(path: &Path) -> String {
    path.file_stem().map_or_else(
        || path.display().to_string(),
        |s| s.to_string_lossy().into_owned(),
    )
}
