//! The workbench's state and the one place it changes: [`App::update`]. Views only read it.

use super::action::Action;
use super::fields::{FIELDS, FieldKind, StageDoc};
use super::search::{Base, Filter, Query, Wanted};
use crate::export::{Context, Shortlist, is_library_file, write_shortlist};
use crate::fit::{self, Candidate, Fit, SortKey};
use crate::library::Library;
use crate::needs::{self, Needs};
use crate::write::write_atomic;
use fuzzy_matcher::FuzzyMatcher;
use fuzzy_matcher::skim::SkimMatcherV2;
use std::path::PathBuf;
use std::sync::Arc;

/// The panels, in Tab order.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Panel {
    /// The stage's inputs, editable.
    Stage,
    /// The needs per role, with the working of the selected one.
    Needs,
    /// The candidates of the selected role.
    Parts,
    /// Every check of the selected part.
    Detail,
    /// The kept parts per role.
    Shortlist,
    /// Substitutes for a part.
    Swap,
    /// Switching waveforms of the stage and the selected candidate.
    Trace,
    /// Rows rejected and warnings from loading.
    Library,
}

impl Panel {
    /// Every panel in Tab order.
    pub const ALL: [Panel; 8] = [
        Panel::Stage,
        Panel::Needs,
        Panel::Parts,
        Panel::Detail,
        Panel::Shortlist,
        Panel::Swap,
        Panel::Trace,
        Panel::Library,
    ];

    /// The panel's name as shown.
    #[must_use]
    pub fn title(self) -> &'static str {
        match self {
            Panel::Stage => "Stage",
            Panel::Needs => "Needs",
            Panel::Parts => "Parts",
            Panel::Detail => "Detail",
            Panel::Shortlist => "Shortlist",
            Panel::Swap => "Swap",
            Panel::Trace => "Trace",
            Panel::Library => "Library",
        }
    }

    fn index(self) -> usize {
        Panel::ALL.iter().position(|&p| p == self).unwrap_or(0)
    }
}

/// A question at the bottom of the screen that takes text or a yes/no.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Prompt {
    /// Where to export the shortlist.
    ExportPath(String),
    /// Where to save the stage.
    SavePath(String),
    /// The export target exists: overwrite?
    ConfirmExport(PathBuf),
    /// The stage target exists: overwrite?
    ConfirmSave(PathBuf),
    /// Unsaved edits: quit anyway?
    ConfirmQuit,
    /// An autosave of the stage from an earlier run was found: restore it?
    RestoreAutosave(PathBuf),
}

/// A Stage field being edited.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Editor {
    /// Index into [`FIELDS`].
    pub field: usize,
    /// What has been typed.
    pub buffer: String,
    /// Why the stage would refuse what has been typed so far (checked at every key press; the
    /// last good value stays in force until Enter applies a good one).
    pub problem: Option<String>,
}

/// The fuzzy search of the Parts panel.
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub struct Search {
    /// What has been typed.
    pub query: String,
    /// Whether keys go to the query (false once Enter accepts it).
    pub typing: bool,
}

/// A library being read on a worker thread.
pub struct Loading {
    /// The files being read.
    pub paths: Vec<PathBuf>,
    /// How far the read has come.
    pub progress: std::sync::Arc<crate::library::LoadProgress>,
    /// When the read began, for the rate.
    pub started: std::time::Instant,
    receiver: std::sync::mpsc::Receiver<Result<Library, String>>,
}

impl Loading {
    /// The gauge's words: rows read, megabytes of the total, megabytes a second.
    #[must_use]
    pub fn describe(&self) -> String {
        describe_load(&self.progress, self.started.elapsed().as_secs_f64())
    }
}

/// The words of a load's gauge after `seconds`: rows, MB of the total, MB/s.
#[must_use]
pub fn describe_load(progress: &crate::library::LoadProgress, seconds: f64) -> String {
    format!(
        "reading library: {} rows, {:.0} of {:.0} MB, {:.0} MB/s",
        progress.rows(),
        progress.bytes() as f64 / 1e6,
        progress.total_bytes() as f64 / 1e6,
        progress.rate(seconds)
    )
}

/// The whole state of the workbench.
pub struct App {
    /// The parts library.
    /// Shared with the background worker that recomputes a large library's fit.
    pub library: std::sync::Arc<Library>,
    /// The library's paths (never written to).
    pub library_paths: Vec<PathBuf>,
    /// The stage as an editable document.
    pub doc: StageDoc,
    /// Where the stage came from, if a file.
    pub stage_path: Option<PathBuf>,
    /// Whether the stage has edits not saved.
    pub dirty: bool,
    /// The needs of the stage.
    pub needs: Needs,
    /// Every role's ranked candidates; shared with the search workers, which read the
    /// candidates in place rather than a copy of them.
    pub fit: Arc<Fit>,
    /// The memory evaluations work in, kept across edits, with the fits they replaced: a
    /// million-part evaluation then reuses its large lists instead of asking the system for
    /// them again. Taken by one evaluation at a time; another one meanwhile works in new
    /// memory.
    spare: Arc<std::sync::Mutex<fit::Spare>>,
    /// The focused panel.
    pub panel: Panel,
    /// Index into `fit.roles`.
    pub role: usize,
    /// Cursor in the Stage panel (index into [`FIELDS`]).
    pub stage_cursor: usize,
    /// A field being edited.
    pub editor: Option<Editor>,
    /// The last message about a field (why an entry was refused), with its field.
    pub field_error: Option<(usize, String)>,
    /// Cursor in the Needs panel.
    pub needs_cursor: usize,
    /// Cursor in the Parts panel (index into the visible list).
    pub parts_cursor: usize,
    /// Scroll of the Detail panel.
    pub detail_scroll: usize,
    /// Cursor in the Shortlist panel.
    pub shortlist_cursor: usize,
    /// Cursor in the Library panel.
    pub library_cursor: usize,
    /// Order within verdict groups.
    pub sort: SortKey,
    /// Hide parts that do not fit.
    pub only_fits: bool,
    /// The search, when one is active.
    pub search: Option<Search>,
    /// Whether needs (and so verdicts) are taken at their worst corners.
    pub worst_case: bool,
    /// The parts kept.
    pub shortlist: Shortlist,
    /// Substitutes for a part, when asked for.
    pub swap: Option<crate::swap::Swap>,
    /// Cursor in the Swap panel.
    pub swap_cursor: usize,
    /// The stage's own trace (the stage's assumptions), when the Trace panel was opened.
    pub trace_stage: Option<Result<crate::trace::Trace, String>>,
    /// The trace with the selected candidate in its role.
    pub trace_part: Option<Result<crate::trace::Trace, String>>,
    /// The time cursor of the Trace panel, as a fraction of the time span (0 to 1).
    pub trace_cursor: f64,
    /// A question waiting for an answer.
    pub prompt: Option<Prompt>,
    /// The help overlay is shown.
    pub help: bool,
    /// A one-line message for the status bar.
    pub message: Option<String>,
    /// The app should end.
    pub quit: bool,
    /// A recomputation running in the background (large libraries): its number and where its
    /// result arrives. The screen shows the last result meanwhile and keys keep working.
    pub pending: Option<(u64, Results)>,
    /// A search running on worker threads (a long candidate list): its number and where its
    /// hits arrive, the first screenful ahead of the rest. The last hits stay on screen until
    /// the first ones come.
    pub searching: Option<(u64, SearchResults)>,
    /// The number of the newest search; a worker stops when it is no longer the newest.
    search_generation: std::sync::Arc<std::sync::atomic::AtomicU64>,
    /// A library being read on a worker thread, shown as a gauge; the library on screen (the
    /// built-in demo at start) stays usable meanwhile.
    pub loading: Option<Loading>,
    generation: u64,
    /// Rows a page moves (set from the terminal height by the view).
    pub page: usize,
    /// What the Parts panel shows: indices into the role's candidates.
    visible: Arc<Vec<usize>>,
    /// The role whose candidates `visible` indexes into, in the present fit (`None` after a
    /// new fit, until a list is made for it).
    visible_role: Option<usize>,
    /// The filter `hits` was made for.
    last_filter: Option<Filter>,
    /// Every hit of `last_filter`, the base a longer query narrows from. The same list as
    /// `visible`, except while a first screenful of a newer search is shown: a first screenful
    /// is never narrowed from, it lacks the hits further down.
    hits: Arc<Vec<usize>>,
    /// The fitting candidates of each role, counted once per fit rather than every frame.
    fit_counts: Vec<usize>,
    /// Highlights the matched letters of the visible rows.
    matcher: SkimMatcherV2,
}

impl App {
    /// A workbench over `library` and the stage `doc`.
    #[must_use]
    pub fn new(
        library: Library,
        library_paths: Vec<PathBuf>,
        doc: StageDoc,
        stage_path: Option<PathBuf>,
    ) -> App {
        let mut app = App {
            library: std::sync::Arc::new(library),
            library_paths,
            doc,
            stage_path,
            dirty: false,
            needs: Needs::default(),
            fit: Arc::new(Fit { roles: Vec::new() }),
            spare: Arc::default(),
            panel: Panel::Stage,
            role: 0,
            stage_cursor: 1,
            editor: None,
            field_error: None,
            needs_cursor: 0,
            parts_cursor: 0,
            detail_scroll: 0,
            shortlist_cursor: 0,
            library_cursor: 0,
            sort: SortKey::Score,
            only_fits: false,
            search: None,
            shortlist: Shortlist::default(),
            worst_case: false,
            swap: None,
            swap_cursor: 0,
            trace_stage: None,
            trace_part: None,
            trace_cursor: 0.5,
            prompt: None,
            help: false,
            message: None,
            quit: false,
            pending: None,
            searching: None,
            search_generation: std::sync::Arc::default(),
            loading: None,
            generation: 0,
            page: 10,
            visible: Arc::default(),
            visible_role: None,
            last_filter: None,
            hits: Arc::default(),
            fit_counts: Vec::new(),
            matcher: SkimMatcherV2::default(),
        };
        app.worst_case = app.doc.stage.rules.worst_case;
        app.recompute();
        app
    }

    /// Needs, fit and the visible list again, after the stage or a view option changed. A
    /// library over [`BACKGROUND_PARTS`] parts is evaluated on a worker thread, so a key press
    /// never waits for it; [`App::poll_background`] takes the result in.
    pub fn recompute(&mut self) {
        self.generation += 1;
        if self.library.parts.len() > BACKGROUND_PARTS {
            let (sender, receiver) = std::sync::mpsc::channel();
            let generation = self.generation;
            let stage = self.doc.stage.clone();
            let library = std::sync::Arc::clone(&self.library);
            let (worst_case, sort) = (self.worst_case, self.sort);
            let spare = Arc::clone(&self.spare);
            std::thread::spawn(move || {
                let (needs, fit) = evaluate(&stage, &library, worst_case, sort, &spare);
                // The workbench may have moved on or ended: a result nobody waits for is dropped.
                let _ = sender.send((generation, needs, fit));
            });
            self.pending = Some((generation, receiver));
            return;
        }
        let (needs, fit) = evaluate(
            &self.doc.stage,
            &self.library,
            self.worst_case,
            self.sort,
            &self.spare,
        );
        self.apply(needs, fit);
    }

    /// Takes in a background result if one has arrived; returns whether the screen changed.
    pub fn poll_background(&mut self) -> bool {
        // Whether a load or a search changed the screen, whatever the recomputation says.
        let loaded = self.poll_load(false) | self.poll_search(Until::Now);
        let Some((generation, receiver)) = &self.pending else {
            return loaded;
        };
        match receiver.try_recv() {
            Ok((done, needs, fit)) if done == *generation => {
                self.pending = None;
                self.apply(needs, fit);
                true
            }
            // An older result: a newer computation is on its way.
            Ok(_) | Err(std::sync::mpsc::TryRecvError::Empty) => loaded,
            Err(std::sync::mpsc::TryRecvError::Disconnected) => {
                self.pending = None;
                self.message = Some("the recomputation failed; edit again to retry".to_string());
                true
            }
        }
    }

    /// Starts reading the library at `paths` on a worker thread; [`App::poll_background`]
    /// puts it in place of the current one when it is read. Until then the workbench works on
    /// the library it has, and the status line shows the load's progress.
    pub fn start_load(&mut self, paths: Vec<PathBuf>) {
        let progress = crate::library::LoadProgress::shared();
        let (sender, receiver) = std::sync::mpsc::channel();
        let worker_paths = paths.clone();
        // Protected from exports from now on, before they are even read.
        self.library_paths.clone_from(&paths);
        let watched = std::sync::Arc::clone(&progress);
        std::thread::spawn(move || {
            let result =
                Library::load_with_progress(&worker_paths, watched).map_err(|e| e.to_string());
            // The workbench may have ended: a library nobody waits for is dropped.
            let _ = sender.send(result);
        });
        self.loading = Some(Loading {
            paths,
            progress,
            started: std::time::Instant::now(),
            receiver,
        });
    }

    /// Takes in a library whose load has finished, if one has; returns whether it did.
    fn poll_load(&mut self, wait: bool) -> bool {
        let Some(loading) = &self.loading else {
            return false;
        };
        let result = if wait {
            loading
                .receiver
                .recv()
                .map_err(|_| std::sync::mpsc::TryRecvError::Disconnected)
        } else {
            loading.receiver.try_recv()
        };
        let outcome = match result {
            Ok(outcome) => outcome,
            Err(std::sync::mpsc::TryRecvError::Empty) => return false,
            Err(std::sync::mpsc::TryRecvError::Disconnected) => {
                Err("the loading thread ended without a library".to_string())
            }
        };
        // `self.loading` was just seen to be `Some`.
        let Some(loading) = self.loading.take() else {
            return false;
        };
        match outcome {
            Ok(library) => {
                let kept = self.shortlist.len();
                // Shortlist, swap and traces point at parts of the old library.
                self.shortlist = Shortlist::default();
                self.swap = None;
                self.trace_part = None;
                self.parts_cursor = 0;
                self.library_cursor = 0;
                self.message = Some(format!(
                    "library read: {} parts, {} rows rejected, in {:.1} s{}",
                    library.parts.len(),
                    library.rows_rejected,
                    loading.started.elapsed().as_secs_f64(),
                    if kept > 0 {
                        "; the shortlist of the demo library was cleared"
                    } else {
                        ""
                    }
                ));
                self.library = std::sync::Arc::new(library);
                self.library_paths = loading.paths;
                self.recompute();
            }
            Err(error) => {
                self.message = Some(format!(
                    "could not read the library: {error}; the built-in demo library stays"
                ));
            }
        }
        true
    }

    /// Waits for a library load to finish and takes it in (for tests and scripted use).
    pub fn wait_for_load(&mut self) {
        self.poll_load(true);
    }

    /// Waits for a background recomputation to finish (for tests and scripted use).
    pub fn wait_for_background(&mut self) {
        while let Some((generation, receiver)) = &self.pending {
            match receiver.recv() {
                Ok((done, needs, fit)) if done == *generation => {
                    self.pending = None;
                    self.apply(needs, fit);
                }
                Ok(_) => {}
                Err(_) => self.pending = None,
            }
        }
    }

    fn apply(&mut self, needs: Needs, fit: Fit) {
        self.needs = needs;
        self.fit_counts = fit.roles.iter().map(fit::RoleFit::fits).collect();
        let old = std::mem::replace(&mut self.fit, Arc::new(fit));
        // The replaced fit's memory serves the next evaluation, unless a search still reads
        // it or an evaluation holds the spare (then it is simply let go).
        if let Some(old) = Arc::into_inner(old)
            && let Ok(mut spare) = self.spare.try_lock()
        {
            spare.keep(old);
        }
        // Candidate positions change with a new fit: the next filter starts from all of them,
        // and the list on screen points at the old ones.
        self.last_filter = None;
        self.hits = Arc::default();
        self.visible_role = None;
        self.role = self.role.min(self.fit.roles.len().saturating_sub(1));
        self.refilter();
        self.retrace();
        if let Some(original) = self.swap.as_ref().map(|s| s.original) {
            self.swap = self.swap_for(original);
            self.swap_cursor = self.swap_cursor.min(
                self.swap
                    .as_ref()
                    .map_or(0, |s| s.candidates.len().saturating_sub(1)),
            );
        }
    }

    /// Substitutes for a part with the stage's needs as the bar, or the part's own ratings when
    /// no role of the stage takes its kind.
    fn swap_for(&self, original: usize) -> Option<crate::swap::Swap> {
        use crate::swap::{Bar, substitutes};
        substitutes(
            &self.library,
            original,
            Bar::Stage(&self.doc.stage, &self.needs),
        )
        .or_else(|_| substitutes(&self.library, original, Bar::Original))
        .ok()
    }

    /// Substitutes for a part as the Swap panel computes them (for tests and screenshots).
    #[must_use]
    pub fn swap_for_test(&self, original: usize) -> Option<crate::swap::Swap> {
        self.swap_for(original)
    }

    /// The part the cursor is on in the panel shown (Parts, Detail, Shortlist or Swap).
    fn part_under_cursor(&self) -> Option<(fit::Role, usize)> {
        match self.panel {
            Panel::Shortlist => self.shortlist_rows().get(self.shortlist_cursor).copied(),
            Panel::Swap => {
                let swap = self.swap.as_ref()?;
                let part = swap.candidates.get(self.swap_cursor)?.part;
                let kind = self.library.parts.get(part)?.kind;
                let role = swap
                    .role
                    .or_else(|| crate::swap::role_for(&self.doc.stage, kind).ok())?;
                Some((role, part))
            }
            _ => {
                let role = self.fit.roles.get(self.role)?;
                Some((role.role, self.selected()?.part))
            }
        }
    }

    fn find_substitutes(&mut self) {
        let part = match self.panel {
            Panel::Swap => self
                .swap
                .as_ref()
                .and_then(|s| s.candidates.get(self.swap_cursor))
                .map(|c| c.part),
            _ => self.part_under_cursor().map(|(_, p)| p),
        };
        let Some(part) = part else {
            self.message = Some("no part selected: pick one in the Parts panel first".to_string());
            return;
        };
        self.swap = self.swap_for(part);
        self.swap_cursor = 0;
        self.focus(Panel::Swap);
    }

    /// The visible list of the Parts panel again (after a search or filter change). A query
    /// over more than [`SEARCH_BACKGROUND`] candidates is searched on worker threads; its hits
    /// arrive through [`App::poll_background`], the first screenful ahead of the rest.
    pub fn refilter(&mut self) {
        let generation = self
            .search_generation
            .fetch_add(1, std::sync::atomic::Ordering::Relaxed)
            + 1;
        let Some(role) = self.fit.roles.get(self.role) else {
            self.searching = None;
            self.show_hits(None, Vec::new());
            return;
        };
        let query = self
            .search
            .as_ref()
            .map(|s| s.query.trim().to_string())
            .unwrap_or_default();
        let filter = (self.role, self.only_fits, query);
        // When the query only grew, its hits are among the last ones: search those alone.
        let narrowing = self.last_filter.as_ref().is_some_and(|(role, fits, last)| {
            *role == filter.0
                && *fits == filter.1
                && !last.is_empty()
                && filter.2.starts_with(last.as_str())
        });
        let base = narrowing.then(|| Arc::clone(&self.hits));
        let length = base.as_ref().map_or(role.candidates.len(), |b| b.len());
        if filter.2.is_empty() || length <= SEARCH_BACKGROUND {
            self.searching = None;
            let hits = self.filter_here(&filter, base.as_deref().map(Vec::as_slice));
            self.show_hits(Some(filter), hits);
            return;
        }
        // A long list is searched on the cores off the UI thread; the keys keep working and a
        // newer key stops this search (it checks `search_generation` as it goes). `hits` and
        // `last_filter` stay as they are until this search is in: still every hit of that
        // filter, so a key typed meanwhile can narrow from them.
        let library = Arc::clone(&self.library);
        let fit = Arc::clone(&self.fit);
        let newest = Arc::clone(&self.search_generation);
        let (sender, receiver) = std::sync::mpsc::channel();
        let (worker_filter, worker_base) = (filter.clone(), base.clone());
        let spawned = std::thread::Builder::new()
            .name("loadfit-search".to_string())
            .spawn(move || {
                let (filter, base) = (worker_filter, worker_base);
                let Some(role) = fit.roles.get(filter.0) else {
                    return;
                };
                let query = Query::new(&filter.2);
                let wanted = Wanted {
                    library: &library,
                    role,
                    only_fits: filter.1,
                    query: &query,
                };
                let base = base
                    .as_deref()
                    .map_or(Base::All(role.candidates.len()), |b| Base::Some(b));
                // The workbench may have moved on or ended: hits nobody waits for are dropped.
                let first = |screen| {
                    let _ = sender.send((generation, filter.clone(), Found::First(screen)));
                };
                if let Some(hits) = wanted.search(base, generation, &newest, &first) {
                    let _ = sender.send((generation, filter.clone(), Found::All(hits)));
                }
            });
        if spawned.is_err() {
            // The system refused a thread: the search runs here, slower but complete.
            self.searching = None;
            let hits = self.filter_here(&filter, base.as_deref().map(Vec::as_slice));
            self.show_hits(Some(filter), hits);
            return;
        }
        // The list on screen stays until the first hits come (no blank frame between keys)
        // when it points at this role's candidates; otherwise it goes at once.
        if self.visible_role != Some(self.role) {
            self.visible = Arc::default();
            self.visible_role = Some(self.role);
            self.parts_cursor = 0;
        }
        self.searching = Some((generation, receiver));
    }

    /// The hits of `filter` among `base` (every candidate of its role when `None`), on this
    /// thread.
    fn filter_here(&self, filter: &Filter, base: Option<&[usize]>) -> Vec<usize> {
        let Some(role) = self.fit.roles.get(filter.0) else {
            return Vec::new();
        };
        let wanted = Wanted {
            library: &self.library,
            role,
            only_fits: filter.1,
            query: &Query::new(&filter.2),
        };
        wanted.matching(base.map_or(Base::All(role.candidates.len()), Base::Some))
    }

    /// Puts `hits`, every hit of `filter`, on screen and keeps them as the base to narrow from.
    fn show_hits(&mut self, filter: Option<Filter>, hits: Vec<usize>) {
        self.visible_role = filter.as_ref().map(|f| f.0);
        self.last_filter = filter;
        self.hits = Arc::new(hits);
        self.visible = Arc::clone(&self.hits);
        self.parts_cursor = self.parts_cursor.min(self.visible.len().saturating_sub(1));
    }

    /// Takes in a background search's hits as far as they have arrived, waiting as `until`
    /// says; returns whether the list changed.
    fn poll_search(&mut self, until: Until) -> bool {
        let mut changed = false;
        loop {
            let Some((generation, receiver)) = &self.searching else {
                return changed;
            };
            let wait = match until {
                Until::Now => false,
                // One message, the first on the channel: the first screenful if the search
                // sent one (it goes before the rest), else all the hits.
                Until::FirstScreenful if changed => return true,
                Until::FirstScreenful | Until::All => true,
            };
            let result = if wait {
                receiver
                    .recv()
                    .map_err(|_| std::sync::mpsc::TryRecvError::Disconnected)
            } else {
                receiver.try_recv()
            };
            match result {
                Ok((done, filter, Found::First(screen))) if done == *generation => {
                    // Shown, never narrowed from: `hits` and `last_filter` stay as they are.
                    self.visible_role = Some(filter.0);
                    self.visible = Arc::new(screen);
                    self.parts_cursor = self.parts_cursor.min(self.visible.len().saturating_sub(1));
                    changed = true;
                }
                Ok((done, filter, Found::All(hits))) if done == *generation => {
                    self.searching = None;
                    self.show_hits(Some(filter), hits);
                    return true;
                }
                // Each search has its own channel, so nothing older arrives; ignored if it did.
                Ok(_) => {}
                Err(std::sync::mpsc::TryRecvError::Empty) => return changed,
                Err(std::sync::mpsc::TryRecvError::Disconnected) => {
                    // The newest search never gives up by itself: it failed.
                    self.searching = None;
                    self.message = Some("the search failed; type again to retry".to_string());
                    return true;
                }
            }
        }
    }

    /// Waits for a background search to finish and takes its hits in (for tests and benches).
    pub fn wait_for_search(&mut self) {
        self.poll_search(Until::All);
    }

    /// Waits for a background search's first screenful (or all its hits, when there are too
    /// few for a first screenful) and shows it, leaving the rest on its way (for tests and
    /// benches).
    pub fn wait_for_first_screenful(&mut self) {
        self.poll_search(Until::FirstScreenful);
    }

    /// The visible list made from every candidate on this thread, not narrowed from the last
    /// and not handed to a worker (for tests: the hits any search must give).
    #[must_use]
    pub fn visible_from_scratch(&self) -> Vec<usize> {
        let query = self
            .search
            .as_ref()
            .map(|s| s.query.trim().to_string())
            .unwrap_or_default();
        self.filter_here(&(self.role, self.only_fits, query), None)
    }

    /// Indices into the selected role's candidates that the Parts panel shows.
    #[must_use]
    pub fn visible(&self) -> &[usize] {
        &self.visible
    }

    /// The fitting candidates of the role at `role` (an index into `fit.roles`).
    #[must_use]
    pub fn fits_in(&self, role: usize) -> usize {
        self.fit_counts.get(role).copied().unwrap_or(0)
    }

    /// The candidate under the Parts cursor.
    #[must_use]
    pub fn selected(&self) -> Option<&Candidate> {
        let role = self.fit.roles.get(self.role)?;
        role.candidates.get(*self.visible.get(self.parts_cursor)?)
    }

    /// Letter positions of the query in `text`, for highlighting.
    #[must_use]
    pub fn matched_letters(&self, text: &str) -> Vec<usize> {
        match &self.search {
            Some(s) if !s.query.trim().is_empty() => self
                .matcher
                .fuzzy_indices(text, s.query.trim())
                .map(|(_, i)| i)
                .unwrap_or_default(),
            _ => Vec::new(),
        }
    }

    /// The kept (role, part) pairs in display order.
    #[must_use]
    pub fn shortlist_rows(&self) -> Vec<(fit::Role, usize)> {
        self.shortlist
            .roles
            .iter()
            .flat_map(|(role, parts)| parts.iter().map(move |&p| (*role, p)))
            .collect()
    }

    /// Whether keys go to a text buffer (a field, the search, a prompt).
    #[must_use]
    pub fn typing(&self) -> bool {
        self.editor.is_some()
            || self.search.as_ref().is_some_and(|s| s.typing)
            || matches!(
                self.prompt,
                Some(Prompt::ExportPath(_) | Prompt::SavePath(_))
            )
    }

    /// Carries out one action.
    pub fn update(&mut self, action: Action) {
        if self.prompt.is_some() {
            self.update_prompt(action);
            return;
        }
        if self.editor.is_some() {
            self.update_editor(action);
            return;
        }
        if self.search.as_ref().is_some_and(|s| s.typing) {
            self.update_search(action);
            return;
        }
        if self.help {
            if matches!(action, Action::ToggleHelp | Action::Back | Action::Quit) {
                self.help = false;
            }
            return;
        }
        self.message = None;
        match action {
            Action::NextPanel => {
                self.focus(Panel::ALL[(self.panel.index() + 1) % Panel::ALL.len()])
            }
            Action::PrevPanel => self
                .focus(Panel::ALL[(self.panel.index() + Panel::ALL.len() - 1) % Panel::ALL.len()]),
            Action::Panel(i) => {
                if let Some(&p) = Panel::ALL.get(i) {
                    self.focus(p);
                }
            }
            Action::Up => self.move_cursor(-1),
            Action::Down => self.move_cursor(1),
            Action::PageUp => self.move_cursor(-(self.page as isize)),
            Action::PageDown => self.move_cursor(self.page as isize),
            Action::Top => self.move_cursor(isize::MIN / 2),
            Action::Bottom => self.move_cursor(isize::MAX / 2),
            Action::Left | Action::Right => {
                let forward = action == Action::Right;
                if self.panel == Panel::Stage {
                    self.cycle_field(forward);
                } else if self.panel == Panel::Trace {
                    let step = if forward { 0.02 } else { -0.02 };
                    self.trace_cursor = (self.trace_cursor + step).clamp(0.0, 1.0);
                } else {
                    self.cycle_role(forward);
                }
            }
            Action::Enter => match self.panel {
                Panel::Stage => self.start_edit(),
                Panel::Parts => self.focus(Panel::Detail),
                Panel::Shortlist => {
                    if let Some((role, part)) =
                        self.shortlist_rows().get(self.shortlist_cursor).copied()
                    {
                        self.show_part(role, part);
                    }
                }
                _ => {}
            },
            Action::Back => {
                if self.search.is_some() {
                    self.search = None;
                    self.refilter();
                } else if self.panel == Panel::Detail {
                    self.focus(Panel::Parts);
                }
            }
            Action::ToggleShortlist => self.toggle_shortlist(),
            Action::FindSubstitutes => self.find_substitutes(),
            Action::ToggleWorstCase => {
                self.worst_case = !self.worst_case;
                self.recompute();
                self.message = Some(
                    if self.worst_case {
                        "needs at their worst corners (supply, temperature, tolerances)"
                    } else {
                        "needs at nominal"
                    }
                    .to_string(),
                );
            }
            Action::StartSearch => {
                self.focus(Panel::Parts);
                let query = self.search.take().map(|s| s.query).unwrap_or_default();
                self.search = Some(Search {
                    query,
                    typing: true,
                });
            }
            Action::CycleSort => {
                self.sort = self.sort.next();
                self.recompute();
                self.message = Some(format!("sorted by {}", self.sort.name()));
            }
            Action::ToggleOnlyFits => {
                self.only_fits = !self.only_fits;
                self.refilter();
                self.message = Some(
                    if self.only_fits {
                        "showing fits only"
                    } else {
                        "showing every candidate"
                    }
                    .to_string(),
                );
            }
            Action::StartExport => {
                self.prompt = Some(Prompt::ExportPath("shortlist.md".to_string()))
            }
            Action::StartSave => {
                let path = self
                    .stage_path
                    .as_ref()
                    .map_or_else(|| "stage.toml".to_string(), |p| p.display().to_string());
                self.prompt = Some(Prompt::SavePath(path));
            }
            Action::ToggleHelp => self.help = true,
            Action::Quit => {
                if self.dirty {
                    self.prompt = Some(Prompt::ConfirmQuit);
                } else {
                    self.quit = true;
                }
            }
            Action::Type(_) | Action::Backspace => {}
        }
    }

    fn focus(&mut self, panel: Panel) {
        self.panel = panel;
        if panel == Panel::Detail {
            self.detail_scroll = 0;
        }
        if panel == Panel::Trace {
            self.retrace();
        }
    }

    /// The traces again: the stage's own, and with the selected candidate. Only while the
    /// Trace panel is shown, so other panels never wait for the solver.
    pub fn retrace(&mut self) {
        if self.panel != Panel::Trace {
            return;
        }
        let stage = &self.doc.stage;
        self.trace_stage = Some(
            crate::trace::simulate(stage, &self.needs, &self.library, None)
                .map_err(|e| e.to_string()),
        );
        let role = self.fit.roles.get(self.role).map(|r| r.role);
        self.trace_part = self.selected().map(|c| c.part).and_then(|index| {
            let part = self.library.parts.get(index)?;
            // A sensor's photocell does not change the load's waveform: nothing to add.
            if role == Some(fit::Role::Sensor) {
                return None;
            }
            Some(
                crate::trace::simulate(stage, &self.needs, &self.library, Some(part))
                    .map_err(|e| e.to_string()),
            )
        });
    }

    fn rows(&self) -> usize {
        match self.panel {
            Panel::Stage => FIELDS.len(),
            Panel::Needs => self.needs.needs.len(),
            Panel::Parts => self.visible.len(),
            Panel::Detail => self.selected().map_or(0, |c| c.checks.len() + 12),
            Panel::Shortlist => self.shortlist.len(),
            Panel::Swap => self.swap.as_ref().map_or(0, |s| s.candidates.len()),
            Panel::Trace => self.visible.len(),
            Panel::Library => self.library.rejected.len() + self.library.warnings.len(),
        }
    }

    fn move_cursor(&mut self, delta: isize) {
        self.move_cursor_only(delta);
        if self.panel == Panel::Trace {
            self.retrace();
        }
    }

    fn move_cursor_only(&mut self, delta: isize) {
        let rows = self.rows();
        let cursor = match self.panel {
            Panel::Stage => &mut self.stage_cursor,
            Panel::Needs => &mut self.needs_cursor,
            Panel::Parts => &mut self.parts_cursor,
            Panel::Detail => &mut self.detail_scroll,
            Panel::Shortlist => &mut self.shortlist_cursor,
            Panel::Swap => &mut self.swap_cursor,
            Panel::Trace => &mut self.parts_cursor,
            Panel::Library => &mut self.library_cursor,
        };
        let last = rows.saturating_sub(1) as isize;
        *cursor = (*cursor as isize)
            .saturating_add(delta)
            .clamp(0, last.max(0)) as usize;
    }

    fn cycle_role(&mut self, forward: bool) {
        let n = self.fit.roles.len();
        if n == 0 {
            return;
        }
        self.role = if forward {
            (self.role + 1) % n
        } else {
            (self.role + n - 1) % n
        };
        self.parts_cursor = 0;
        self.refilter();
    }

    fn cycle_field(&mut self, forward: bool) {
        let Some(field) = FIELDS.get(self.stage_cursor) else {
            return;
        };
        let cycles = matches!(field.kind, FieldKind::Choice(_) | FieldKind::Bool)
            || (field.kind == FieldKind::Integer && field.key == "overvoltage_category");
        if !cycles {
            return;
        }
        match self.doc.cycle(field, forward) {
            Ok(()) => self.changed(),
            Err(e) => self.field_error = Some((self.stage_cursor, e)),
        }
    }

    fn start_edit(&mut self) {
        let Some(field) = FIELDS.get(self.stage_cursor) else {
            return;
        };
        if matches!(field.kind, FieldKind::Choice(_) | FieldKind::Bool) {
            self.cycle_field(true);
            return;
        }
        self.editor = Some(Editor {
            field: self.stage_cursor,
            buffer: self.doc.get(field).unwrap_or_default(),
            problem: None,
        });
    }

    fn changed(&mut self) {
        self.dirty = true;
        self.field_error = None;
        self.recompute();
        self.autosave();
    }

    /// Where edits of the stage are kept until saved: `.NAME.autosave` beside the stage file.
    /// The built-in demo stage has none (there is no file to sit beside).
    #[must_use]
    pub fn autosave_path(&self) -> Option<PathBuf> {
        autosave_path_for(self.stage_path.as_deref()?)
    }

    fn autosave(&mut self) {
        if let Some(path) = self.autosave_path()
            && let Err(e) = write_atomic(&path, self.doc.to_text().as_bytes(), true)
        {
            self.message = Some(format!("autosave failed: {e}"));
        }
    }

    /// Removes the autosave (after a save, or a quit that discards the edits on purpose).
    pub fn drop_autosave(&self) {
        if let Some(path) = self.autosave_path() {
            let _ = std::fs::remove_file(path);
        }
    }

    /// Offers back an autosave left by an earlier run that ended without saving.
    pub fn offer_autosave(&mut self) {
        if let Some(path) = self.autosave_path()
            && path.is_file()
        {
            self.prompt = Some(Prompt::RestoreAutosave(path));
        }
    }

    fn restore_autosave(&mut self, path: &std::path::Path) {
        let restored = std::fs::read_to_string(path)
            .map_err(|e| e.to_string())
            .and_then(|text| StageDoc::parse(&text, &self.doc.file));
        match restored {
            Ok(doc) => {
                self.doc = doc;
                self.dirty = true;
                self.recompute();
                self.message = Some(format!(
                    "restored the unsaved edits from {}; w saves them",
                    path.display()
                ));
            }
            Err(e) => {
                self.message = Some(format!(
                    "the autosave could not be read ({e}); it is left in place"
                ))
            }
        }
    }

    fn update_editor(&mut self, action: Action) {
        let Some(editor) = self.editor.as_mut() else {
            return;
        };
        match action {
            Action::Type(_) | Action::Backspace => {
                if let Action::Type(c) = action {
                    editor.buffer.push(c);
                } else {
                    editor.buffer.pop();
                }
                // Read the entry as the stage would, on a copy, so the field says at once why
                // it would be refused.
                let field = &FIELDS[editor.field.min(FIELDS.len() - 1)];
                let mut trial = self.doc.clone();
                editor.problem = trial.set(field, &editor.buffer).err();
            }
            Action::Back => {
                self.editor = None;
            }
            Action::Enter => {
                let Some(editor) = self.editor.take() else {
                    return;
                };
                let field = &FIELDS[editor.field.min(FIELDS.len() - 1)];
                match self.doc.set(field, &editor.buffer) {
                    Ok(()) => self.changed(),
                    Err(e) => {
                        self.field_error = Some((editor.field, e));
                    }
                }
            }
            _ => {}
        }
    }

    fn update_search(&mut self, action: Action) {
        let Some(search) = self.search.as_mut() else {
            return;
        };
        match action {
            Action::Type(c) => search.query.push(c),
            Action::Backspace => {
                search.query.pop();
            }
            Action::Enter => search.typing = false,
            Action::Back => self.search = None,
            Action::Up | Action::Down => {
                search.typing = false;
                self.refilter();
                self.update(action);
                return;
            }
            _ => return,
        }
        self.parts_cursor = 0;
        self.refilter();
    }

    fn update_prompt(&mut self, action: Action) {
        let Some(prompt) = self.prompt.as_mut() else {
            return;
        };
        match prompt {
            Prompt::ExportPath(buffer) | Prompt::SavePath(buffer) => match action {
                Action::Type(c) => buffer.push(c),
                Action::Backspace => {
                    buffer.pop();
                }
                Action::Back => self.prompt = None,
                Action::Enter => {
                    let path = PathBuf::from(buffer.trim());
                    let export = matches!(prompt, Prompt::ExportPath(_));
                    self.prompt = None;
                    if path.as_os_str().is_empty() {
                        return;
                    }
                    if path.exists() {
                        self.prompt = Some(if export {
                            Prompt::ConfirmExport(path)
                        } else {
                            Prompt::ConfirmSave(path)
                        });
                    } else if export {
                        self.export(&path, false);
                    } else {
                        self.save(&path, false);
                    }
                }
                _ => {}
            },
            Prompt::ConfirmExport(_)
            | Prompt::ConfirmSave(_)
            | Prompt::ConfirmQuit
            | Prompt::RestoreAutosave(_) => {
                let yes = matches!(action, Action::Type('y' | 'Y'));
                let no = matches!(action, Action::Type('n' | 'N') | Action::Back);
                if !(yes || no) {
                    return;
                }
                let prompt = self.prompt.take();
                match (yes, prompt) {
                    (true, Some(Prompt::ConfirmExport(path))) => self.export(&path, true),
                    (true, Some(Prompt::ConfirmSave(path))) => self.save(&path, true),
                    (true, Some(Prompt::ConfirmQuit)) => {
                        self.drop_autosave();
                        self.quit = true;
                    }
                    (true, Some(Prompt::RestoreAutosave(path))) => self.restore_autosave(&path),
                    (false, Some(Prompt::RestoreAutosave(path))) => {
                        let _ = std::fs::remove_file(&path);
                        self.message = Some("the autosave was discarded".to_string());
                    }
                    _ => {}
                }
            }
        }
    }

    fn protected(&self) -> Vec<PathBuf> {
        crate::export::library_files(&self.library_paths)
    }

    /// Writes the shortlist to `path` (format from the extension); from the Trace panel, the
    /// trace shown (`.svg` plot, `.csv` points or `.json` figures).
    pub fn export(&mut self, path: &std::path::Path, overwrite: bool) {
        if self.panel == Panel::Trace {
            self.export_trace(path, overwrite);
            return;
        }
        let context = Context {
            stage: &self.doc.stage,
            needs: &self.needs,
            library: &self.library,
            fit: &self.fit,
        };
        let result = write_shortlist(
            path,
            &context,
            &self.shortlist,
            &self.protected(),
            overwrite,
        );
        self.message = Some(match result {
            Ok(()) => format!(
                "exported {} parts to {}",
                self.shortlist.len(),
                path.display()
            ),
            Err(e) => format!("not exported: {e}"),
        });
    }

    fn export_trace(&mut self, path: &std::path::Path, overwrite: bool) {
        let trace = self
            .trace_part
            .as_ref()
            .and_then(|r| r.as_ref().ok())
            .or_else(|| self.trace_stage.as_ref().and_then(|r| r.as_ref().ok()));
        let Some(trace) = trace else {
            self.message = Some("nothing to export: this stage has no trace".to_string());
            return;
        };
        let extension = path
            .extension()
            .and_then(|e| e.to_str())
            .map(str::to_ascii_lowercase);
        let text = match extension.as_deref() {
            Some("svg") => crate::trace::svg::to_svg(trace),
            Some("csv") => crate::trace::report::to_csv(trace),
            Some("json") => crate::trace::report::to_json_string(trace),
            _ => {
                self.message = Some(format!(
                    "not exported: name the file .svg, .csv or .json ({})",
                    path.display()
                ));
                return;
            }
        };
        if is_library_file(path, &self.protected()) {
            self.message = Some(format!(
                "not exported: {} is a library file",
                path.display()
            ));
            return;
        }
        self.message = Some(match write_atomic(path, text.as_bytes(), overwrite) {
            Ok(()) => format!("exported the trace to {}", path.display()),
            Err(e) => format!("not exported: {e}"),
        });
    }

    /// Writes the stage to `path`.
    pub fn save(&mut self, path: &std::path::Path, overwrite: bool) {
        if is_library_file(path, &self.protected()) {
            self.message = Some(format!("not saved: {} is a library file", path.display()));
            return;
        }
        let text = format!("# stage saved by loadfit\n{}", self.doc.to_text());
        self.message = Some(match write_atomic(path, text.as_bytes(), overwrite) {
            Ok(()) => {
                self.drop_autosave();
                self.dirty = false;
                self.stage_path = Some(path.to_path_buf());
                format!("saved {}", path.display())
            }
            Err(e) => format!("not saved: {e}"),
        });
    }

    fn toggle_shortlist(&mut self) {
        let Some((role, part)) = self.part_under_cursor() else {
            if self.panel == Panel::Swap {
                self.message = Some("this stage has no role for that kind of part".to_string());
            }
            return;
        };
        let kept = self.shortlist.toggle(role, part);
        let number = self
            .library
            .parts
            .get(part)
            .map_or("", |p| &p.number)
            .to_string();
        self.message = Some(format!(
            "{} {number} {} {}",
            if kept { "kept" } else { "dropped" },
            if kept { "for" } else { "from" },
            role.name()
        ));
        self.shortlist_cursor = self
            .shortlist_cursor
            .min(self.shortlist.len().saturating_sub(1));
    }

    fn show_part(&mut self, role: fit::Role, part: usize) {
        if let Some(i) = self.fit.roles.iter().position(|r| r.role == role) {
            self.role = i;
            self.search = None;
            self.only_fits = false;
            self.refilter();
            if let Some(at) = self
                .visible
                .iter()
                .position(|&c| self.fit.roles[i].candidates[c].part == part)
            {
                self.parts_cursor = at;
            }
            self.focus(Panel::Detail);
        }
    }
}

/// Where a background search's hits arrive: its number, the filter it was made for and the
/// hits (the first screenful, then all of them).
pub type SearchResults = std::sync::mpsc::Receiver<(u64, Filter, Found)>;

/// Hits of a background search as they arrive.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Found {
    /// The first [`super::search::FIRST_SCREEN`] hits in rank order, sent ahead of the rest
    /// when the list is long; shown at once, never narrowed from.
    First(Vec<usize>),
    /// Every hit, in rank order.
    All(Vec<usize>),
}

/// How long [`App::poll_search`] waits.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Until {
    /// Not at all: takes what has arrived.
    Now,
    /// Until something is on screen: the first screenful or all the hits.
    FirstScreenful,
    /// Until all the hits are in.
    All,
}

/// Where a background recomputation's result arrives: its number, the needs and the fit.
pub type Results = std::sync::mpsc::Receiver<(u64, Needs, Fit)>;

/// Libraries over this many parts are evaluated on a worker thread after each edit.
pub const BACKGROUND_PARTS: usize = 50_000;

/// Candidate lists over this long are searched on worker threads, shorter ones on the UI
/// thread: about a millisecond at most (measured at a million parts, where the candidates' parts
/// lie far apart in memory), so their hits are on the very next frame, and the tests and
/// snapshots of small libraries see them at once.
pub const SEARCH_BACKGROUND: usize = 5_000;

/// The needs of a stage (nominal, or at their worst corners carrying the nominal values for the
/// side-by-side view) and the fit of the library against them.
fn evaluate(
    stage: &crate::stage::Stage,
    library: &Library,
    worst_case: bool,
    sort: SortKey,
    spare: &std::sync::Mutex<fit::Spare>,
) -> (Needs, Fit) {
    let needs = if worst_case {
        needs::compute_both(stage, Some(library)).worst
    } else {
        needs::compute_nominal(stage, Some(library))
    };
    let fit = match spare.try_lock() {
        Ok(mut spare) => fit::evaluate_with(stage, &needs, library, sort, &mut spare),
        // Another evaluation works in the spare (or one ended without giving it back).
        Err(_) => fit::evaluate(stage, &needs, library, sort),
    };
    (needs, fit)
}

/// The autosave beside a stage file: `.NAME.autosave` in the same folder.
#[must_use]
pub fn autosave_path_for(stage: &std::path::Path) -> Option<PathBuf> {
    let name = stage.file_name()?.to_string_lossy();
    Some(stage.with_file_name(format!(".{name}.autosave")))
}
