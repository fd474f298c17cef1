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

/// Write `value` as json (pretty: indented, as `to_string_pretty`; else
/// on one line) and a line end, straight to stdout through a buffer: no
/// json tree or string of the whole output is built. A failed write is
/// handled as in [`out!`].
pub(crate) fn out_json<T: serde::Serialize + ?Sized>(value: &T, pretty: bool) {
    use std::io::Write as _;
    if STDOUT_CLOSED.load(std::sync::atomic::Ordering::Relaxed) {
        return;
    }
    let mut w = std::io::BufWriter::with_capacity(1 << 16, std::io::stdout().lock());
    let written = if pretty {
        serde_json::to_writer_pretty(&mut w, value)
    } else {
        serde_json::to_writer(&mut w, value)
    };
    if let Err(e) = written
        .map_err(std::io::Error::from)
        .and_then(|()| w.write_all(b"\n"))
        .and_then(|()| w.flush())
    {
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
mod html;
mod package;
mod render;
mod sources;
mod watch;
mod whatif;
mod workbooks;

use std::io::IsTerminal;
use std::path::{Path, PathBuf};
use std::process::ExitCode;

use clap::{Parser, Subcommand, ValueEnum};
use sheaf_engine::{Model, units};

/// Exit statuses (README "Commands").
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
Exit status: 0 fine; 1 the worksheet has errors; 2 usage or file error; 3 a check failed.\n\n\
What-if:\n  sheaf run FILE --case NAME | --cases\n  sheaf sweep FILE --format csv"
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
    /// A self-contained printable page (run only).
    Html,
}

#[derive(Subcommand)]
enum Command {
    /// Check and evaluate a worksheet; print its results.
    #[command(
        after_help = "Examples:\n  sheaf run worksheets/air_receiver.sheaf\n  \
sheaf run worksheets/air_receiver.sheaf --set 'V_rec=3 m^3' --set 'p_high=9 barg'\n  \
sheaf run worksheets/air_receiver.sheaf --format json > results.json\n  \
sheaf run worksheets/plant_air_whatif.sheaf --case hot_day\n  \
sheaf run worksheets/plant_air_whatif.sheaf --cases\n  \
generate-worksheet | sheaf run -     (read from standard input; paths resolve against the working directory)\n\n\
Exit status: 0 all checks pass; 1 errors; 2 usage or file error; 3 a check failed (with --cases: \
in any case)."
    )]
    Run {
        /// The worksheet (.sheaf), or - for standard input.
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
        /// Evaluate the worksheet with the inputs of this `case` (--set applies on top).
        #[arg(long, value_name = "NAME", conflicts_with = "cases")]
        case: Option<String>,
        /// Evaluate the worksheet as written (case `base`) and every case; print them side by side.
        #[arg(long)]
        cases: bool,
    },
    /// Run every `sweep` of a worksheet; print its table.
    #[command(after_help = whatif::SWEEP_HELP)]
    Sweep {
        /// The worksheet (.sheaf).
        file: PathBuf,
        /// Output format.
        #[arg(long, value_enum, default_value_t = whatif::SweepFormat::Text)]
        format: whatif::SweepFormat,
        /// Sweep around the inputs of this `case`.
        #[arg(long, value_name = "NAME")]
        case: Option<String>,
        /// Override an input: NAME=VALUE with a unit. Repeatable.
        #[arg(long = "set", value_name = "NAME=VALUE")]
        set: Vec<String>,
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
        /// Write the package for the inputs of this `case`.
        #[arg(long, value_name = "NAME")]
        case: Option<String>,
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
    if let Some(what) = stdin_refused(&cli.command) {
        eprintln!(
            "error: {what} needs a worksheet file; `-` (standard input) works with run, check, sweep and xlsx -o"
        );
        return ExitCode::from(EXIT_USAGE);
    }
    let code = match cli.command {
        Command::Run {
            file,
            set,
            format,
            sig,
            case,
            cases,
        } => {
            if cases {
                match load_with_sets(&file, &set, None) {
                    Ok((name, model)) => whatif::cmd_cases(&name, &model, format, usize::from(sig)),
                    Err(c) => c,
                }
            } else {
                cmd_run(&file, &set, case.as_deref(), format, usize::from(sig))
            }
        }
        Command::Sweep {
            file,
            format,
            case,
            set,
            sig,
        } => match load_with_sets(&file, &set, case.as_deref()) {
            Ok((name, model)) => whatif::cmd_sweep(&name, model, format, usize::from(sig)),
            Err(c) => c,
        },
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
        Command::Xlsx {
            file,
            out,
            set,
            case,
        } => package::cmd_xlsx(&file, out.as_deref(), &set, case.as_deref()),
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

/// Commands that cannot take the worksheet from standard input (`-`): they
/// write it back, watch it, compare it with git, or name a package after it.
fn stdin_refused(command: &Command) -> Option<&'static str> {
    let dash = |f: &Path| sources::is_stdin(f);
    match command {
        Command::Fmt { file, write: true } if dash(file) => Some("fmt --write"),
        Command::Xlsx {
            file, out: None, ..
        } if dash(file) => Some("xlsx without -o"),
        Command::Watch { file, .. } if dash(file) => Some("watch"),
        Command::Pull { file, .. } if dash(file) => Some("pull"),
        Command::Diff { old, .. } if dash(old) => Some("diff"),
        _ => None,
    }
}

fn read(file: &Path) -> Result<String, u8> {
    if sources::is_stdin(file) {
        let mut text = String::new();
        return std::io::Read::read_to_string(&mut std::io::stdin(), &mut text)
            .map(|_| text)
            .map_err(|e| {
                eprintln!("error: cannot read standard input: {e}");
                EXIT_USAGE
            });
    }
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

/// [`load`], then apply a `--case` and `--set NAME=VALUE` overrides (in
/// that order).
fn load_with_sets(file: &Path, sets: &[String], case: Option<&str>) -> Result<(String, Model), u8> {
    let (name, mut model) = load(file)?;
    if let Some(c) = case
        && let Err(e) = model.apply_case(c)
    {
        eprintln!("error: --case {e}");
        return Err(EXIT_USAGE);
    }
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

fn cmd_run(file: &Path, sets: &[String], case: Option<&str>, format: Format, sig: usize) -> u8 {
    let (name, mut model) = match load_with_sets(file, sets, case) {
        Ok(x) => x,
        Err(c) => return c,
    };
    model.evaluate();
    let errors = model.runtime_errors();
    if !errors.is_empty() {
        diagnostics::emit(&name, model.source(), &errors);
    }
    let report = model.report();
    let colour = std::io::stdout().is_terminal() && std::env::var_os("NO_COLOR").is_none();
    print_report(&report, &name, format, sig, colour);
    let code = if !errors.is_empty() {
        EXIT_ERRORS
    } else if report.checks.iter().any(|c| c.passed == Some(false)) {
        EXIT_CHECK_FAILED
    } else {
        0
    };
    // The process ends right after this: the operating system takes the
    // memory back at once, while freeing the syntax trees, compiled code
    // and report rows one by one costs about 7 % of a large run.
    std::mem::forget(report);
    std::mem::forget(model);
    code
}

/// Print an evaluated worksheet's report in `format` (run and watch).
pub(crate) fn print_report(
    report: &sheaf_engine::Report,
    name: &str,
    format: Format,
    sig: usize,
    colour: bool,
) {
    match format {
        Format::Text => out!(
            "{}",
            render::text(report, name, sig, &render::Style::new(colour))
        ),
        Format::Json => out_json(&render::json(report), true),
        Format::Md => out!("{}", render::markdown(report, name, sig)),
        Format::Html => out!("{}", html::html(report, name, sig)),
    }
}

fn cmd_check(file: &Path) -> u8 {
    match load(file) {
        Ok((name, model)) => {
            let count = |k| model.nodes().iter().filter(|n| n.kind == k).count();
            use sheaf_engine::NodeKind;
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
    use sheaf_engine::{CalcError, Evaluated, Reading};
    let calc = match sheaf_engine::evaluate_expression(text, unit) {
        Ok(c) => c,
        Err(CalcError::Expression(ds)) => {
            diagnostics::emit("<expression>", text, &ds);
            return EXIT_ERRORS;
        }
        Err(CalcError::Unit(m)) => {
            eprintln!("error: --in {}: {m}", unit.unwrap_or_default());
            return EXIT_USAGE;
        }
    };
    for w in &calc.warnings {
        eprintln!("warning: {}", w.message);
    }
    /// A number of `sheaf eval` as json (keys in alphabetical order).
    #[derive(serde::Serialize)]
    struct JsonReading<'a> {
        #[serde(skip_serializing_if = "Option::is_none")]
        name: Option<&'a str>,
        si_unit: &'a str,
        si_value: f64,
        unit: &'a str,
        value: f64,
    }
    /// A true/false or text value of `sheaf eval` as json.
    #[derive(serde::Serialize)]
    struct JsonPlain<T> {
        unit: &'static str,
        value: T,
    }
    /// A value with fields (a state) of `sheaf eval` as json.
    #[derive(serde::Serialize)]
    struct JsonFields<'a> {
        fields: Vec<JsonReading<'a>>,
        what: &'a str,
    }
    fn reading_json(r: &Reading, name: bool) -> JsonReading<'_> {
        JsonReading {
            name: name.then_some(r.name.as_str()),
            si_unit: &r.si_unit,
            si_value: r.si_value,
            unit: &r.unit,
            value: r.value,
        }
    }
    let shown = |r: &Reading| {
        let v = units::format_sig(r.value, sig);
        if r.unit.is_empty() {
            v
        } else {
            format!("{v} {}", r.unit)
        }
    };
    match (&calc.result, format) {
        (Evaluated::Number(r), Format::Json) => out_json(&reading_json(r, false), false),
        (Evaluated::Number(r), _) => outln!("{}", shown(r)),
        (Evaluated::Bool(b), Format::Json) => out_json(&JsonPlain { unit: "", value: b }, false),
        (Evaluated::Bool(b), _) => outln!("{}", if *b { "yes" } else { "no" }),
        (Evaluated::Text(t), Format::Json) => out_json(&JsonPlain { unit: "", value: t }, false),
        (Evaluated::Text(t), _) => outln!("{t}"),
        (Evaluated::Fields { what, fields }, Format::Json) => {
            let fields = fields.iter().map(|f| reading_json(f, true)).collect();
            out_json(&JsonFields { fields, what }, false)
        }
        (Evaluated::Fields { what, fields }, Format::Md) => {
            outln!("**{}**\n", render::md_escape(what));
            outln!("| field | value | unit | what |\n|---|---:|---|---|");
            for f in fields {
                outln!(
                    "| `.{}` | {} | {} | {} |",
                    f.name,
                    units::format_sig(f.value, sig),
                    render::md_escape(&f.unit),
                    f.words
                );
            }
        }
        (Evaluated::Fields { what, fields }, _) => {
            outln!("{what}");
            for f in fields {
                outln!(
                    "  .{:<4} {:>12} {:<10} {}",
                    f.name,
                    units::format_sig(f.value, sig),
                    f.unit,
                    f.words
                );
            }
        }
    }
    0
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
    outln!("  .k is cp/cv; for a real fluid it is not the isentropic exponent");
    outln!(
        "substance fields: .M (molar mass), .R (gases); perfect gas .cp .cv .k; incompressible .cp .cv .rho .v"
    );
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
