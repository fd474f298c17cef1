//! `sheaf`: the command line. Thin: reads files and arguments, calls the
//! engine, prints what it returns.

/// Print to stdout. A failed write is an error (exit 2, message on
/// stderr), except a closed pipe (`sheaf units | head`): then the rest of
/// the output is dropped quietly and the run keeps the status it would
/// have had.
macro_rules! out {
    ($($arg:tt)*) => {
        $crate::stdout_write(format_args!($($arg)*))
    };
}

/// [`out!`] with a line end.
macro_rules! outln {
    () => { out!("\n") };
    ($($arg:tt)*) => {
        out!("{}\n", format_args!($($arg)*))
    };
}

/// Set once stdout's reader has gone (EPIPE).
static STDOUT_CLOSED: std::sync::atomic::AtomicBool = std::sync::atomic::AtomicBool::new(false);

/// What [`out!`] does: write, and handle a failure (see there).
fn stdout_write(args: std::fmt::Arguments) {
    use std::io::Write as _;
    if STDOUT_CLOSED.load(std::sync::atomic::Ordering::Relaxed) {
        return;
    }
    if let Err(e) = std::io::stdout().lock().write_fmt(args) {
        stdout_failed(&e);
    }
}

/// Flush stdout before exiting (its buffer may still hold a line).
fn stdout_flush() {
    use std::io::Write as _;
    if STDOUT_CLOSED.load(std::sync::atomic::Ordering::Relaxed) {
        return;
    }
    if let Err(e) = std::io::stdout().lock().flush() {
        stdout_failed(&e);
    }
}

fn stdout_failed(e: &std::io::Error) {
    if e.kind() == std::io::ErrorKind::BrokenPipe {
        STDOUT_CLOSED.store(true, std::sync::atomic::Ordering::Relaxed);
    } else {
        eprintln!("error: cannot write to standard output: {e}");
        std::process::exit(i32::from(EXIT_USAGE));
    }
}

mod diagnostics;
mod diff;
mod files;
mod package;
mod render;
mod sources;
mod watch;
mod workbooks;

use std::io::IsTerminal;
use std::path::{Path, PathBuf};
use std::process::ExitCode;

use clap::{Parser, Subcommand, ValueEnum};
use serde_json::json;
use sheaf_engine::check::check_standalone;
use sheaf_engine::eval::{Value, eval};
use sheaf_engine::report::{field_words, substance_fields};
use sheaf_engine::thermo::Field;
use sheaf_engine::types::Ty;
use sheaf_engine::{Model, units};

/// Exit statuses (DESIGN §5).
pub(crate) const EXIT_ERRORS: u8 = 1;
pub(crate) const EXIT_USAGE: u8 = 2;
pub(crate) const EXIT_CHECK_FAILED: u8 = 3;

#[derive(Parser)]
#[command(
    name = "sheaf",
    version,
    about = "Unit-checked engineering worksheets with real property models",
    long_about = "sheaf checks every unit of a plain-text worksheet, evaluates it as a dependency graph \
with ideal-gas, incompressible and IAPWS-IF97 water/steam models, and reports the results.",
    after_help = "Examples:\n  sheaf run worksheets/air_receiver.sheaf\n  sheaf run pump.sheaf --set 'p2=12 barg' --format json\n  \
sheaf check pump.sheaf\n  sheaf eval \"14.7 psi\" --in kPa\n  sheaf units pressure\n\n\
Exit status: 0 fine; 1 the worksheet has errors; 2 usage or file error; 3 a check failed."
)]
struct Cli {
    #[command(subcommand)]
    command: Command,
    /// Also allow reading files (used worksheets, workbooks) in DIR and
    /// below, besides the worksheet's own folder. Repeatable.
    #[arg(long = "allow", value_name = "DIR", global = true)]
    allow: Vec<PathBuf>,
}

#[derive(Clone, Copy, ValueEnum, PartialEq)]
pub(crate) enum Format {
    Text,
    Json,
    Md,
}

#[derive(Subcommand)]
enum Command {
    /// Check and evaluate a worksheet; print its results.
    #[command(
        after_help = "Examples:\n  sheaf run worksheets/air_receiver.sheaf\n  \
sheaf run worksheets/air_receiver.sheaf --set 'V_rec=3 m^3' --set 'p_high=9 barg'\n  \
sheaf run worksheets/air_receiver.sheaf --format json > results.json\n\n\
Exit status: 0 all checks pass; 1 errors; 2 usage or file error; 3 a check failed."
    )]
    Run {
        /// The worksheet (.sheaf).
        file: PathBuf,
        /// Override an input: NAME=VALUE with a unit, e.g. 'p2=8 barg' (quoted: it has a space). Repeatable.
        #[arg(long = "set", value_name = "NAME=VALUE")]
        set: Vec<String>,
        /// Output format.
        #[arg(long, value_enum, default_value_t = Format::Text)]
        format: Format,
        /// Significant figures in text and markdown output.
        #[arg(long, default_value_t = 4, value_parser = clap::value_parser!(u8).range(1..=15))]
        sig: u8,
    },
    /// Parse and dimension-check a worksheet without evaluating it.
    #[command(after_help = "Example:\n  sheaf check worksheets/air_receiver.sheaf")]
    Check {
        /// The worksheet (.sheaf).
        file: PathBuf,
    },
    /// Evaluate one expression with the built-ins (a unit-aware calculator).
    #[command(after_help = "Examples:\n  sheaf eval \"14.7 psi\" --in kPa\n  \
sheaf eval \"20 degC - 10 degC\"\n  \
sheaf eval 'state(fluid(\"water\"), p: 3 MPa, T: 400 degC).h' --in kJ/kg")]
    Eval {
        /// The expression.
        #[arg(allow_hyphen_values = true)]
        expr: String,
        /// Show the result in this unit.
        #[arg(long = "in", value_name = "UNIT")]
        unit: Option<String>,
        #[arg(long, value_enum, default_value_t = Format::Text)]
        format: Format,
        #[arg(long, default_value_t = 4, value_parser = clap::value_parser!(u8).range(1..=15))]
        sig: u8,
    },
    /// List the units sheaf knows, or those matching WORD.
    #[command(after_help = "Examples:\n  sheaf units\n  sheaf units pressure\n  sheaf units psi")]
    Units {
        /// Symbol, name or quantity to look for.
        word: Option<String>,
    },
    /// List the built-in functions and constants.
    Functions,
    /// Rewrite a worksheet in canonical layout (prints it; --write replaces the file).
    #[command(after_help = "Examples:\n  sheaf fmt pump.sheaf\n  sheaf fmt --write pump.sheaf")]
    Fmt {
        file: PathBuf,
        /// Replace the file in place (atomically).
        #[arg(long)]
        write: bool,
    },
    /// Write the xlsx calculation package (live formulas) of a worksheet.
    #[command(after_help = package::XLSX_HELP)]
    Xlsx {
        /// The worksheet (.sheaf).
        file: PathBuf,
        /// Output workbook (default: FILE with .xlsx beside it).
        #[arg(short = 'o', long = "out", value_name = "OUT.xlsx")]
        out: Option<PathBuf>,
        /// Override an input: NAME=VALUE with a unit. Repeatable.
        #[arg(long = "set", value_name = "NAME=VALUE")]
        set: Vec<String>,
    },
    /// Run (and export) once, then again on every save of the worksheet or a file it reads.
    #[command(
        after_help = "Examples:\n  sheaf watch pump.sheaf\n  sheaf watch pump.sheaf --xlsx review/pump.xlsx\n\n\
Watches the folders of the worksheet, the worksheets it uses and the workbooks it reads; \
re-runs after each save (debounced), clears the terminal and redraws; errors are shown and \
watching goes on. The package is replaced atomically. Ctrl-C stops (exit 0)."
    )]
    Watch {
        /// The worksheet (.sheaf).
        file: PathBuf,
        /// Also write the package here on every run.
        #[arg(long, value_name = "OUT.xlsx")]
        xlsx: Option<PathBuf>,
        #[arg(long, value_enum, default_value_t = Format::Text)]
        format: Format,
        #[arg(long, default_value_t = 4, value_parser = clap::value_parser!(u8).range(1..=15))]
        sig: u8,
        /// Override an input: NAME=VALUE with a unit. Repeatable.
        #[arg(long = "set", value_name = "NAME=VALUE")]
        set: Vec<String>,
    },
    /// What changed between two worksheets, or between a git revision and the working file.
    #[command(after_help = diff::DIFF_HELP)]
    Diff {
        /// The old worksheet (or, with --rev, the worksheet).
        old: PathBuf,
        /// The new worksheet.
        new: Option<PathBuf>,
        /// Compare the file as committed in this git revision with the working file.
        #[arg(long, value_name = "REV", conflicts_with = "new")]
        rev: Option<String>,
        #[arg(long, value_enum, default_value_t = Format::Text)]
        format: Format,
        /// Report a result when its relative change exceeds TOL (default: any change at the displayed precision).
        #[arg(long, value_name = "TOL")]
        rel: Option<f64>,
        /// Significant figures shown (and compared, without --rel).
        #[arg(long, default_value_t = 4, value_parser = clap::value_parser!(u8).range(1..=15))]
        sig: u8,
        /// Exit 3 when a check that passed in OLD fails in NEW.
        #[arg(long)]
        strict: bool,
    },
    /// Read inputs a reviewer changed in a package back into the worksheet.
    #[command(after_help = package::PULL_HELP)]
    Pull {
        /// The worksheet (.sheaf).
        file: PathBuf,
        /// The reviewed package.
        #[arg(long, value_name = "REVIEWED.xlsx")]
        from: PathBuf,
        /// Rewrite the changed numbers in the worksheet (atomically).
        #[arg(long)]
        write: bool,
        /// Pull even from a workbook of another worksheet version.
        #[arg(long)]
        force: bool,
    },
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    sources::set_allowed(cli.allow.clone());
    let code = match cli.command {
        Command::Run {
            file,
            set,
            format,
            sig,
        } => cmd_run(&file, &set, format, usize::from(sig)),
        Command::Check { file } => cmd_check(&file),
        Command::Eval {
            expr,
            unit,
            format,
            sig,
        } => cmd_eval(&expr, unit.as_deref(), format, usize::from(sig)),
        Command::Units { word } => cmd_units(word.as_deref()),
        Command::Functions => cmd_functions(),
        Command::Fmt { file, write } => cmd_fmt(&file, write),
        Command::Xlsx { file, out, set } => package::cmd_xlsx(&file, out.as_deref(), &set),
        Command::Watch {
            file,
            xlsx,
            format,
            sig,
            set,
        } => watch::cmd_watch(&file, xlsx.as_deref(), format, usize::from(sig), &set),
        Command::Diff {
            old,
            new,
            rev,
            format,
            rel,
            sig,
            strict,
        } => diff::cmd_diff(
            &old,
            new.as_deref(),
            rev.as_deref(),
            format,
            &diff::Options {
                rel,
                sig: usize::from(sig),
                strict,
            },
        ),
        Command::Pull {
            file,
            from,
            write,
            force,
        } => package::cmd_pull(&file, &from, write, force),
    };
    stdout_flush();
    ExitCode::from(code)
}

fn read(file: &Path) -> Result<String, u8> {
    std::fs::read_to_string(file).map_err(|e| {
        eprintln!("error: cannot read {}: {e}", file.display());
        EXIT_USAGE
    })
}

/// Read, parse and check; diagnostics go to stderr. Workbooks named in
/// `cell(...)` are found relative to the worksheet's folder.
fn load(file: &Path) -> Result<(String, Model), u8> {
    let loaded = sources::load(file, &sources::Rev::Work).map_err(|e| {
        eprintln!("error: {e}");
        EXIT_USAGE
    })?;
    let (name, src) = (loaded.name, loaded.source);
    match loaded.model {
        Ok(m) => Ok((name, m)),
        Err(diags) => {
            diagnostics::emit(&name, &src, &diags);
            eprintln!(
                "{} error{} in {name}",
                diags.len(),
                if diags.len() == 1 { "" } else { "s" }
            );
            Err(EXIT_ERRORS)
        }
    }
}

/// [`load`], then apply `--set NAME=VALUE` overrides.
fn load_with_sets(file: &Path, sets: &[String]) -> Result<(String, Model), u8> {
    let (name, mut model) = load(file)?;
    for s in sets {
        let Some((n, v)) = s.split_once('=') else {
            eprintln!("error: --set expects NAME=VALUE (e.g. --set 'p2=8 barg'), got `{s}`");
            return Err(EXIT_USAGE);
        };
        if let Err(e) = model.set_input_text(n.trim(), v.trim()) {
            eprintln!("error: --set {e}");
            return Err(EXIT_USAGE);
        }
    }
    Ok((name, model))
}

fn cmd_run(file: &Path, sets: &[String], format: Format, sig: usize) -> u8 {
    let (name, mut model) = match load_with_sets(file, sets) {
        Ok(x) => x,
        Err(c) => return c,
    };
    model.evaluate();
    let errors = model.runtime_errors();
    if !errors.is_empty() {
        diagnostics::emit(&name, model.source(), &errors);
    }
    let report = model.report();
    match format {
        Format::Text => {
            let colour = std::io::stdout().is_terminal() && std::env::var_os("NO_COLOR").is_none();
            out!(
                "{}",
                render::text(&report, &name, sig, &render::Style::new(colour))
            );
        }
        Format::Json => match serde_json::to_string_pretty(&render::json(&report)) {
            Ok(s) => outln!("{s}"),
            Err(e) => {
                eprintln!("error: {e}");
                return EXIT_ERRORS;
            }
        },
        Format::Md => out!("{}", render::markdown(&report, &name, sig)),
    }
    if !errors.is_empty() {
        EXIT_ERRORS
    } else if report.checks.iter().any(|c| c.passed == Some(false)) {
        EXIT_CHECK_FAILED
    } else {
        0
    }
}

fn cmd_check(file: &Path) -> u8 {
    match load(file) {
        Ok((name, model)) => {
            let count = |k| model.nodes().iter().filter(|n| n.kind == k).count();
            use sheaf_engine::check::NodeKind;
            outln!(
                "{name}: ok ({} inputs, {} computed values, {} checks; units consistent)",
                count(NodeKind::Input),
                count(NodeKind::Computed),
                count(NodeKind::Check)
            );
            0
        }
        Err(c) => c,
    }
}

fn cmd_eval(text: &str, unit: Option<&str>, format: Format, sig: usize) -> u8 {
    let expr = match sheaf_grammar::parse_expr(text) {
        Ok(e) => e,
        Err(e) => {
            diagnostics::emit("<expression>", text, &[e.into()]);
            return EXIT_ERRORS;
        }
    };
    let (ty, code) = match check_standalone(&expr, text) {
        Ok(x) => x,
        Err(ds) => {
            diagnostics::emit("<expression>", text, &ds);
            return EXIT_ERRORS;
        }
    };
    let mut warnings = Vec::new();
    let value = match eval(&code, &[], expr.span, &mut warnings) {
        Ok(v) => v,
        Err(e) => {
            diagnostics::emit(
                "<expression>",
                text,
                &[sheaf_engine::Diagnostic::error(e.message, e.span)],
            );
            return EXIT_ERRORS;
        }
    };
    for w in &warnings {
        eprintln!("warning: {}", w.message);
    }
    match (ty, value) {
        (Ty::Num(q), Value::Num(si)) => {
            let (shown, unit_text) = match unit {
                Some(u) => {
                    let parsed = match sheaf_grammar::parse_unit(u) {
                        Ok(p) => p,
                        Err(e) => {
                            diagnostics::emit("<unit>", u, &[e.into()]);
                            return EXIT_USAGE;
                        }
                    };
                    let target = match units::resolve(&parsed) {
                        Ok(t) => t,
                        Err(e) => {
                            let hint = e
                                .suggestion
                                .map(|s| format!(" (did you mean `{s}`?)"))
                                .unwrap_or_default();
                            eprintln!("error: --in {u}: {}{hint}", e.message);
                            return EXIT_USAGE;
                        }
                    };
                    if target.dim != q.dim {
                        eprintln!(
                            "error: --in {u}: `{u}` is {}, but the value is {}",
                            units::quantity_name(target.dim),
                            sheaf_engine::types::describe_qty(q)
                        );
                        return EXIT_USAGE;
                    }
                    if q.aff == units::Affinity::Difference
                        && target.affinity == units::Affinity::Absolute
                    {
                        eprintln!(
                            "error: --in {u}: the value is a difference; show it in K or delta_degC"
                        );
                        return EXIT_USAGE;
                    }
                    (
                        target.from_si(si),
                        u.split_whitespace().collect::<Vec<_>>().join(" "),
                    )
                }
                None => units::auto_display(q.dim, si),
            };
            match format {
                Format::Json => outln!(
                    "{}",
                    json!({"value": shown, "unit": unit_text, "si_value": si, "si_unit": units::si_unit(q.dim)})
                ),
                _ => {
                    let v = units::format_sig(shown, sig);
                    if unit_text.is_empty() {
                        outln!("{v}")
                    } else {
                        outln!("{v} {unit_text}")
                    }
                }
            }
            0
        }
        (_, Value::State(sv)) => {
            if unit.is_some() {
                eprintln!("error: --in applies to a number; pick a field, e.g. `(...).h`");
                return EXIT_USAGE;
            }
            outln!("state of {}", sv.sub);
            for f in Field::ALL {
                if let Some(x) = sv.st.get(f) {
                    let dim = match sheaf_engine::check::field_type(f) {
                        Ty::Num(q) => q.dim,
                        _ => units::Dim::NONE,
                    };
                    let (v, u) = units::auto_display(dim, x);
                    outln!(
                        "  .{:<4} {:>12} {:<10} {}",
                        f.name(),
                        units::format_sig(v, sig),
                        u,
                        field_words(f)
                    );
                }
            }
            0
        }
        (_, Value::Substance(sub)) => {
            outln!("{sub}");
            for (n, dim, x, words) in substance_fields(&sub) {
                let (v, u) = units::auto_display(dim, x);
                outln!(
                    "  .{n:<4} {:>12} {u:<10} {words}",
                    units::format_sig(v, sig)
                );
            }
            0
        }
        (_, Value::Bool(b)) => {
            outln!("{b}");
            0
        }
        (_, Value::Str(s)) => {
            outln!("\"{s}\"");
            0
        }
        _ => {
            eprintln!("error: the expression has no value");
            EXIT_ERRORS
        }
    }
}

fn cmd_units(word: Option<&str>) -> u8 {
    let list = match word {
        Some(w) => units::search(w),
        None => units::catalogue(),
    };
    if list.is_empty() {
        let hint = word
            .and_then(units::suggest)
            .map(|s| format!("; did you mean `{s}`?"))
            .unwrap_or_default();
        eprintln!("no unit matches `{}`{hint}", word.unwrap_or(""));
        return EXIT_USAGE;
    }
    outln!("{:<12} {:<34} {:<28} in SI", "symbol", "name", "quantity");
    for u in list {
        let si = units::si_unit(units::lookup(u.symbol).map_or(units::Dim::NONE, |x| x.dim));
        let conv = if u.offset != 0.0 {
            format!(
                "x {} + {} {si}",
                units::format_sig(u.factor, 10),
                units::format_sig(u.offset, 10)
            )
        } else {
            format!("{} {si}", units::format_sig(u.factor, 10))
        };
        outln!(
            "{:<12} {:<34} {:<28} {conv}{}",
            u.symbol,
            u.name,
            u.quantity,
            if u.note.is_empty() {
                String::new()
            } else {
                format!("  ({})", u.note)
            }
        );
    }
    outln!("\nSI prefixes (k, M, m, µ or u, ...) apply to metric units: kPa, MJ, mm, mL.");
    0
}

fn cmd_functions() -> u8 {
    use sheaf_engine::builtins::{ALL, Family};
    for family in [
        Family::Math,
        Family::Substances,
        Family::Devices,
        Family::SecondLaw,
        Family::Cells,
    ] {
        outln!("{}", family.title());
        for s in ALL.iter().filter(|b| b.family == family) {
            outln!("  {:<72} {}", s.usage, s.description);
        }
        outln!();
    }
    outln!("real fluids (fluid(\"NAME\"))");
    for e in sheaf_engine::thermo::fluid::FLUIDS {
        let f = e.fluid;
        outln!("  {:<16} {}", e.names.join(", "), f.describe());
        outln!("  {:<16} source: {}", "", f.citation());
        outln!("  {:<16} range: {}", "", f.range());
        outln!("  {:<16} reference state: {}", "", f.reference_state());
    }
    outln!("\nconstants");
    for c in sheaf_engine::builtins::CONSTANTS {
        outln!("  {:<12} {}", c.name, c.description);
    }
    outln!("\nstate fields: .T .p .h .u .s .v .rho .cp .cv .k .x .w");
    0
}

fn cmd_fmt(file: &Path, write: bool) -> u8 {
    let src = match read(file) {
        Ok(s) => s,
        Err(c) => return c,
    };
    let name = file.display().to_string();
    let formatted = match sheaf_grammar::format(&src) {
        Ok(f) => f,
        Err(es) => {
            let diags: Vec<_> = es.into_iter().map(Into::into).collect();
            diagnostics::emit(&name, &src, &diags);
            return EXIT_ERRORS;
        }
    };
    if !write {
        out!("{formatted}");
        return 0;
    }
    match files::write_file(file, formatted.as_bytes()) {
        Ok(()) => 0,
        Err(e) => {
            eprintln!("error: {e}; {name} not changed");
            EXIT_USAGE
        }
    }
}
