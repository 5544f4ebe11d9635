//! The one definition of every command and its options. The argument parser
//! ([`super::Args::parse`]) accepts exactly the options listed here for the
//! command, and the help text (`mortise help CMD`, `mortise CMD --help`) is
//! rendered from the same table, so an option cannot be accepted without
//! being documented, nor documented without being accepted.

/// One option of a command.
#[derive(Debug, Clone, Copy)]
pub struct Opt {
    /// Name without dashes; a one-letter name is written `-x`, a longer one `--name`.
    pub name: &'static str,
    /// Placeholder of the value in the help, or "" for a flag (no value).
    pub value: &'static str,
    /// May be given more than once (every value is used, in order).
    pub repeat: bool,
    /// What it does, and its default.
    pub help: &'static str,
}

const fn flag(name: &'static str, help: &'static str) -> Opt {
    Opt {
        name,
        value: "",
        repeat: false,
        help,
    }
}
const fn val(name: &'static str, value: &'static str, help: &'static str) -> Opt {
    Opt {
        name,
        value,
        repeat: false,
        help,
    }
}
const fn many(name: &'static str, value: &'static str, help: &'static str) -> Opt {
    Opt {
        name,
        value,
        repeat: true,
        help,
    }
}

impl Opt {
    pub fn is_flag(&self) -> bool {
        self.value.is_empty()
    }
    /// `--name` or `-x`, as typed.
    pub fn spelled(&self) -> String {
        if self.name.len() == 1 {
            format!("-{}", self.name)
        } else {
            format!("--{}", self.name)
        }
    }
}

/// A titled group of options.
#[derive(Debug, Clone, Copy)]
pub struct Group {
    pub title: &'static str,
    pub opts: &'static [Opt],
}

/// One command: what the general help, the command's help and the parser use.
#[derive(Debug, Clone, Copy)]
pub struct Command {
    pub name: &'static str,
    /// One line for the general help.
    pub summary: &'static str,
    /// The synopsis after `usage:`.
    pub usage: &'static str,
    /// What it does, operands included (paragraphs separated by blank lines).
    pub about: &'static str,
    pub groups: &'static [Group],
    /// One example command line (runs as written from the repository's root).
    pub example: &'static str,
}

/// The help option every command takes (handled by the parser).
pub const HELP_OPT: Opt = flag("help", "print this help and exit");

const JSON_OPT: Opt = flag(
    "json",
    "print one JSON document on standard output instead of text, also when something fails: \
     \"ok\", \"exit_code\", the results and, on failure, \"error\" with its kind, file, line or \
     byte, field and message (default: text)",
);

/// Column-map and import options (inspect and convert).
pub const IMPORT_OPTS: &[Opt] = &[
    val(
        "component",
        "NAME",
        "component namespace for DOFs that name none (default: the file stem)",
    ),
    val(
        "map",
        "MAP.json|auto",
        "a saved column map (JSON, as in a recipe's \"column_map\"), instead of the options below; \
         'auto' detects it from the file's column names and units (H_<out>_<in>_re/_im, \
         <name> Re/Im, _mag/_phase, K'/eta pairs; a unit in brackets or on a title line) and \
         reports how in the file's warnings",
    ),
    val(
        "delim",
        "D",
        "cell separator: auto, comma, semicolon, tab or space (default auto)",
    ),
    val("skip", "N", "lines before the first data row (default 0)"),
    val(
        "header-line",
        "N",
        "1-based line holding the column names (default: the last skipped line)",
    ),
    val(
        "decimal",
        "SEP",
        "decimal separator: point or comma (default point)",
    ),
    val(
        "freq-col",
        "C",
        "frequency column (default 1); C is a 1-based column number or a header name",
    ),
    val(
        "freq-unit",
        "U",
        "unit of the frequency column: hz, khz or rad/s (default hz)",
    ),
    many(
        "out-dof",
        "D",
        "output DOF of one FRF, e.g. wall:A1+Z; give one --out-dof (and one --in-dof) per FRF, \
         in the order of the value columns (required with a column map)",
    ),
    many(
        "in-dof",
        "D",
        "input DOF of one FRF (required with a column map, except for spectra: --signal)",
    ),
    many(
        "re",
        "C",
        "real-part column of one FRF (with --im; one per FRF)",
    ),
    many("im", "C", "imaginary-part column of one FRF (with --re)"),
    many(
        "mag",
        "C",
        "magnitude column of one FRF (with --phase; linear unless --mag-db-ref)",
    ),
    many("phase", "C", "phase column of one FRF (with --mag)"),
    many(
        "value",
        "C",
        "one real value column per FRF (no phase: the imaginary part is zero)",
    ),
    many(
        "stiffness",
        "C",
        "storage stiffness K' column of one FRF (with --loss): the value is K'(1 + iη)",
    ),
    many(
        "loss",
        "C",
        "loss factor η column of one FRF (with --stiffness)",
    ),
    many(
        "coh",
        "C",
        "coherence column of one FRF (give one per FRF, or none; default: none)",
    ),
    val(
        "mag-db-ref",
        "R",
        "the magnitude columns are levels in dB re R (R in the value unit --unit); default: linear",
    ),
    val(
        "phase-unit",
        "U",
        "unit of the phase columns: deg or rad (default deg)",
    ),
    val(
        "unit",
        "U",
        "unit of the values, e.g. g/N, mm/s/N, N/mm, Pa/N (default: SI for the quantities)",
    ),
    val(
        "out-qty",
        "Q",
        "output quantity: displacement, velocity, acceleration, force, pressure, ... \
         (required with a column map)",
    ),
    val(
        "in-qty",
        "Q",
        "input quantity: force, displacement, ... (required with a column map, except for spectra)",
    ),
    val(
        "signal",
        "KIND",
        "what the file's spectra are: peak, rms, autopower or psd; for UFF it declares the scaling of function type 12 (else read as peak), for CSV the columns are spectra (no --in-dof/--in-qty)",
    ),
    val(
        "time-convention",
        "TC",
        "the supplier's time convention: +iwt or -iwt (-iwt values are conjugated on reading; \
         default +iwt)",
    ),
    val(
        "set-name",
        "NAME",
        "name of the set read (default: the component name)",
    ),
];

/// MAT-file mapping options (inspect and convert). The DOFs, quantities,
/// unit, frequency unit, time convention and set name are the column-map
/// options of the same name (`--out-dof`, `--in-dof`, `--out-qty`,
/// `--in-qty`, `--unit`, `--freq-unit`, `--time-convention`, `--set-name`).
pub const MAT_OPTS: &[Opt] = &[
    val(
        "mat-map",
        "MAP.json",
        "a saved MAT mapping (JSON, as in a recipe's \"mat\"), instead of the options below",
    ),
    val(
        "mat-freq",
        "VAR",
        "the variable holding the frequency vector",
    ),
    val(
        "mat-frf",
        "VAR",
        "the variable holding the FRFs (complex or real; 2-D or 3-D)",
    ),
    val(
        "mat-layout",
        "L",
        "how the FRF variable is laid out: out-in-freq (outputs × inputs × lines), freq-out-in \
         (lines × outputs × inputs), freq-frf (one FRF per column) or frf-freq (one FRF per row)",
    ),
    val(
        "mat-out-dofs-var",
        "VAR",
        "a cell array of strings (or char matrix) in the file with the output DOF labels, \
         instead of --out-dof",
    ),
    val(
        "mat-in-dofs-var",
        "VAR",
        "a cell array of strings (or char matrix) in the file with the input DOF labels, instead \
         of --in-dof",
    ),
];

/// UFF options: what a file does not tell (quantities, DOF numbers).
pub const UFF_OPTS: &[Opt] = &[
    val(
        "uff-out-qty",
        "Q",
        "response quantity of UFF datasets that do not tell it (function type 0, blank data          types and labels): displacement, velocity, acceleration, force, pressure; refused when          every dataset tells it",
    ),
    val(
        "uff-in-qty",
        "Q",
        "reference quantity of UFF datasets that do not tell it, as --uff-out-qty",
    ),
    val(
        "uff-dofs",
        "[N:]OUT,IN",
        "DOFs of UFF dataset N (1-based, in file order) written without DOF numbers (node 0,          direction 0), e.g. 3:wall:1+Z,wall:2+Z; N left out: the file's only such dataset;          separate several with ';'",
    ),
];

const UFF_GROUP: Group = Group {
    title: "UFF options (what a Universal File does not tell)",
    opts: UFF_OPTS,
};

/// The UFF options of the command line into `o` (see [`UFF_OPTS`]).
pub fn uff_options(
    args: &super::args::Args,
    o: &mut crate::io::ImportOptions,
) -> crate::error::Result<()> {
    use crate::error::Error;
    let qty = |name: &str| -> crate::error::Result<Option<crate::units::Quantity>> {
        args.value(name)
            .map(|t| {
                crate::units::Quantity::parse(t)
                    .map_err(|e| Error::usage(format!("--{name}: {}", e.message)))
            })
            .transpose()
    };
    o.out_qty = qty("uff-out-qty")?;
    o.in_qty = qty("uff-in-qty")?;
    if let Some(t) = args.value("uff-dofs") {
        for part in t.split(';').filter(|p| !p.trim().is_empty()) {
            o.dofs.push(
                crate::io::UffDofs::parse(part.trim())
                    .map_err(|e| Error::usage(format!("--uff-dofs: {}", e.message)))?,
            );
        }
    }
    Ok(())
}

const MAT_GROUP: Group = Group {
    title: "MAT-file options (level-5 MAT-files; with these, --out-dof/--in-dof give the outputs \
            and inputs of a 3-D layout or one pair per FRF of a 2-D one, and --unit, --out-qty, \
            --in-qty, --freq-unit, --time-convention, --set-name apply; without them 'inspect' \
            lists the file's variables)",
    opts: MAT_OPTS,
};

/// The file-size budget, for every command that reads files.
const MAX_FILE_OPT: Opt = val(
    "max-file-mb",
    "N",
    "largest file read, in MB (10^6 bytes), above 0; only regular files are read, never devices \
     or pipes (default 256 MiB, 268.4 MB)",
);
const FILES_GROUP: Group = Group {
    title: "files",
    opts: &[MAX_FILE_OPT],
};

/// The resource budget of the commands that compute (run, couple, convert).
pub const LIMITS_GROUP: Group = Group {
    title: "limits (checked before anything large is allocated or computed; over budget is an \
            error naming what asked, its size and the budget, exit code 1)",
    opts: &[
        val(
            "budget-gb",
            "X",
            "memory one run may ask for, in gigabytes (10^9 bytes): every set a component or \
             step would create, every synthesized model's matrices; default 2.147 (2 GiB)",
        ),
        val(
            "work-budget",
            "OPS",
            "estimated floating-point operations one model or step may take, e.g. 1e12; \
             default 5e10 (about half a minute on one core of a 2020s laptop)",
        ),
    ],
};

const IMPORT_GROUP: Group = Group {
    title: "column-map options (for CSV/TSV files not in mortise's own layout; C is a 1-based \
            column number or a header name)",
    opts: IMPORT_OPTS,
};

pub const INSPECT: Command = Command {
    name: "inspect",
    summary:
        "what each file holds: format, FRFs, DOFs, quantities, SI unit, grid, SHA-256, audit flags",
    usage: "mortise inspect FILE... [--json] [column-map options]",
    about: "Reads each FILE (UFF 58 ASCII or 58b binary, mortise CSV, a bundle, or a supplier \
            CSV/TSV through the column-map options; the format is detected from the content, not \
            the extension) and prints its SHA-256 and format and, for each FRF set, its DOFs, \
            quantities, SI unit, frequency lines, missing entries, coherence and the fitness audit \
            with the default limits of 'mortise audit'.\n\n\
            A file that cannot be read is reported in its place and the other files are still \
            inspected; the exit code is then 1. The column-map options apply to every FILE.",
    groups: &[
        Group {
            title: "options",
            opts: &[JSON_OPT, HELP_OPT],
        },
        FILES_GROUP,
        IMPORT_GROUP,
        MAT_GROUP,
        UFF_GROUP,
    ],
    example: "mortise inspect sample-frf/unit-casing.uff sample-frf/brackets.uffb --json",
};

pub const CONVERT: Command = Command {
    name: "convert",
    summary:
        "read files (any format, supplier CSV through a column map) and write them as one file",
    usage: "mortise convert IN... -o OUT [--to FORMAT] [--kind KIND] [--grid G [--interp I]] \
            [--json] [limits] [column-map options]",
    about: "Reads every IN (formats as for 'mortise inspect', the column-map options applying to \
            each), optionally converts each FRF set to another kind and puts all sets on one \
            frequency grid, and writes them all to OUT in SI units.\n\n\
            A file or set that cannot be read or converted is reported, the others are still \
            written, and the exit code is then 1; when nothing could be read, nothing is written.",
    groups: &[
        Group {
            title: "options",
            opts: &[
                val("o", "OUT", "the file to write (required)"),
                val(
                    "to",
                    "FORMAT",
                    "uff (UFF 58 ASCII), uff-binary (58b), csv (mortise CSV, lossless) or bundle \
                     (JSON); default: from OUT's extension: .uff or .unv, .csv, .json",
                ),
                val(
                    "kind",
                    "KIND",
                    "convert every FRF set to receptance, mobility, accelerance, \
                     dynamic-stiffness, impedance or apparent-mass (multiplying by (iω)^n, or \
                     inverting line by line); default: keep each set's kind",
                ),
                val(
                    "units",
                    "si",
                    "si, the only choice: every format mortise writes holds SI values (a \
                     supplier's units are set when reading, with --unit); default si",
                ),
                val(
                    "grid",
                    "G",
                    "put every set on one grid: finest or coarsest (the finest or coarsest of \
                     the inputs' lines inside the range all of them cover) or START:STOP:STEP \
                     (an even grid in Hz); never extrapolated: a grid beyond any input's range is \
                     an error; default: keep each set's lines; a UFF file of modes (dataset 55) \
                     without FRFs is synthesized on START:STOP:STEP",
                ),
                val(
                    "interp",
                    "I",
                    "interpolation for --grid: re-im (linear in real and imaginary part) or \
                     log-mag-phase (linear in log magnitude and unwrapped phase); default re-im; \
                     needs --grid",
                ),
                JSON_OPT,
                HELP_OPT,
            ],
        },
        LIMITS_GROUP,
        FILES_GROUP,
        IMPORT_GROUP,
        MAT_GROUP,
        UFF_GROUP,
    ],
    example: "mortise convert sample-frf/isolator-stiffness.csv -o isolator.csv --delim semicolon \
              --skip 3 --freq-col 'f [Hz]' --stiffness \"K' axial [N/mm]\" --loss 'eta axial [-]' \
              --out-dof isolator:1+Z --in-dof isolator:1+Z --unit N/mm --out-qty force --in-qty \
              displacement",
};

pub const RUN: Command = Command {
    name: "run",
    summary: "execute a recipe (or the recipe of a bundle); write its outputs as UFF 58 and CSV plus report.json",
    usage: "mortise run RECIPE|BUNDLE -o OUTDIR [--json] [--read-outside] [limits]",
    about: "Executes RECIPE (mortise's JSON recipe: components, steps, variants, outputs; \
            'mortise help recipe') from files alone. File names inside the recipe are relative to \
            the recipe file's own directory, so a recipe runs the same from any current \
            directory, and must stay inside it unless --read-outside is given.\n\n\
            Given a BUNDLE instead (detected by content), runs the recipe it holds on the input \
            files it carries; an input the sender withheld is read from a file of the same name \
            beside the bundle, which must have the SHA-256 the bundle records.\n\n\
            Writes every requested output (and each step's extra results: a path analysis's \
            per-path contributions as ID/PATH, a blocked-force validation's predicted and measured \
            spectra) to OUTDIR (created if needed) as NAME.uff (UFF 58; text \
            node labels numbered, the numbers listed in the report) and NAME.csv (mortise CSV, \
            lossless), plus report.json (conditioning, warnings, levels, path rankings, the audit \
            of every component, the headline), and prints the headline. Each identify-modes step \
            also gives ID.modes.json and ID.modes.unv (its modal model, when a driving point \
            scales it) and ID.stability.svg (its stabilization chart).",
    groups: &[
        Group {
            title: "options",
            opts: &[
                val(
                    "o",
                    "OUTDIR",
                    "the directory to write the outputs and report.json into (required)",
                ),
                val(
                    "monte-carlo",
                    "N",
                    "also run the recipe's baseline on N draws (2 or more) of the components that \
                     have an 'uncertainty' key, and report each level's 95 % interval over the \
                     draws beside the first-order one (report.json 'monte_carlo', the headline); \
                     N times the run's time",
                ),
                val(
                    "seed",
                    "S",
                    "seed of the --monte-carlo draws, a whole number (default 1); the same seed \
                     gives the same draws",
                ),
                JSON_OPT,
                HELP_OPT,
            ],
        },
        LIMITS_GROUP,
        Group {
            title: "files",
            opts: &[
                flag(
                    "read-outside",
                    "let the recipe (or the bundle) name files outside its own folder: absolute \
                     paths, '..' that leave it, links out of it (default: refused, so a recipe \
                     received from someone else reads nothing else on this machine)",
                ),
                MAX_FILE_OPT,
            ],
        },
    ],
    example: "mortise run sample-frf/heat-pump.recipe.json -o results",
};

pub const DIAGRAM: Command = Command {
    name: "diagram",
    summary: "draw the assembly a recipe describes as SVG: components, joints, steps, outputs \
              (or, with --step, the geometry of a virtual-point step)",
    usage: "mortise diagram RECIPE [-o FILE.svg] [--step ID [--read-outside] [limits]]",
    about: "Reads RECIPE (as 'mortise run' does, without reading the files it names) and draws \
            it: each component with its source and interface DOFs, each coupling step's joints \
            as connectors between the parts' DOFs with the joint type and its parameters in SI \
            units, and every step in recipe order as a flow from the components to the results, \
            requested outputs marked and joints a variant leaves out dashed. The page's assembly \
            panel shows the same drawing. Beyond 200 components, 200 steps or 200 joints the \
            rest are counted in a note rather than drawn.\n\n\
            With --step ID, draws instead the geometry of the to-virtual-points step ID in three \
            views (top X-Y, front X-Z, side Y-Z): each virtual point's origin with its name, each \
            sensor channel as a solid arrow from the sensor, each impact as a dashed arrow into \
            the point hit, and a scale bar in the geometry's unit. This reads the files the \
            recipe names (relative to its folder, as 'mortise run' reads them) and runs the \
            steps before ID, to know the channels and impacts of the set the step reads; \
            --read-outside and the limits apply to that. A step the recipe does not have, or a \
            step of another kind, is refused naming it.",
    groups: &[
        Group {
            title: "options",
            opts: &[
                val(
                    "o",
                    "FILE.svg",
                    "the SVG file to write; default: the SVG on standard output",
                ),
                val(
                    "step",
                    "ID",
                    "draw the geometry of the to-virtual-points step ID (its virtual points, \
                     sensor channels and impacts) instead of the assembly",
                ),
                HELP_OPT,
            ],
        },
        LIMITS_GROUP,
        Group {
            title: "files",
            opts: &[
                flag(
                    "read-outside",
                    "with --step: let the recipe name files outside its own folder (default: \
                     refused, as for 'mortise run')",
                ),
                MAX_FILE_OPT,
            ],
        },
    ],
    example: "mortise diagram sample-frf/heat-pump.recipe.json -o assembly.svg",
};

pub const COUPLE: Command = Command {
    name: "couple",
    summary: "couple two or more files at listed DOF pairs (LM-FBS) without writing a recipe",
    usage: "mortise couple FILE FILE... --join 'A = B [k=.. c=.. eta=.. | stiffness=FILE]'... \
            -o OUT [--tsvd X] [--print-recipe RECIPE] [--json] [limits]",
    about: "Couples the FRF sets of the FILEs (formats as for 'mortise inspect', read without a \
            column map) at the joints given by --join, by LM-FBS, and writes the coupled set to \
            OUT. Each FILE becomes a component named after its file stem, which is also the DOF \
            namespace of its DOFs: node 4 of casing.uff is casing:4. The result is in the first \
            FILE's kind. It runs the same code as a one-step recipe given to 'mortise run'.",
    groups: &[
        Group {
            title: "options",
            opts: &[
                many(
                    "join",
                    "'A = B ...'",
                    "one joint between DOF A of one component and DOF B of another (labels \
                 component:node+DIR, DIR one of X Y Z RX RY RZ). Alone it is rigid; followed by \
                 k=N/m it is a spring, c=N*s/m a damper, k= and eta= hysteretic, k= and c= (and \
                 eta=) a spring-damper, stiffness=FILE a measured dynamic stiffness (a 1x1 set \
                 in FILE). At least one",
                ),
                val(
                    "o",
                    "OUT",
                    "the file to write (required); its format follows the extension: .uff or .unv \
                 (UFF 58), .uffb (58b), .csv (mortise CSV), .json (bundle)",
                ),
                val(
                    "tsvd",
                    "X",
                    "regularise the interface inversion by truncated SVD: singular values below X \
                 times the largest are dropped; X from 0 to below 1; default: no truncation",
                ),
                val(
                    "print-recipe",
                    "RECIPE",
                    "also write the recipe this command runs to the file RECIPE, with file names \
                 relative to RECIPE's directory, to grow it and run it with 'mortise run \
                 RECIPE'; default: none",
                ),
                JSON_OPT,
                HELP_OPT,
            ],
        },
        LIMITS_GROUP,
        FILES_GROUP,
    ],
    example: "mortise couple sample-frf/unit-casing.uff sample-frf/brackets.uffb \
              --join 'unit-casing:101+Z = brackets:1+Z k=2e5 eta=0.1' \
              --join 'unit-casing:102+Z = brackets:2+Z k=2e5 eta=0.1' -o mounted.uff",
};

pub const AUDIT: Command = Command {
    name: "audit",
    summary: "fitness of each file's FRFs: reciprocity, passivity, coherence, linearity, conditioning, grid",
    usage: "mortise audit FILE... [--pair A,B] [--json] [--coherence-min X ...]",
    about: "Audits every FRF set of each FILE (formats as for 'mortise inspect', read without a \
            column map): reciprocity, passivity, coherence, conditioning, grid (spacing and \
            resolution of the resonance peaks) and import remarks, each passed, flagged (with the 1/3-octave bands where it \
            flags) or not applicable. With --pair it also compares one component measured at \
            two excitation levels for linearity.\n\n\
            A file that cannot be read is reported in its place and the others are still \
            audited; the exit code is then 1. A flag is a finding, not a failure: it does not \
            change the exit code.",
    groups: &[Group {
        title: "options",
        opts: &[
            val(
                "pair",
                "A,B",
                "also compare the sets of files A and B (the same component at two excitation \
                 levels, sets paired in order) for linearity; '--pair A B' works too when B is \
                 the only FILE; default: no pair",
            ),
            val(
                "tolerance-db",
                "X",
                "linearity: largest level difference accepted between the two levels of \
                 --pair, in dB, 0 to 100 (default 1)",
            ),
            val(
                "coherence-min",
                "X",
                "smallest coherence accepted, 0 to 1 (default 0.9)",
            ),
            val(
                "reciprocity-tol",
                "X",
                "largest relative reciprocity difference |H_ij - H_ji| / max(|H_ij|, |H_ji|) \
                 accepted, 0 to 10 (default 0.1)",
            ),
            val(
                "condition-max",
                "X",
                "largest condition number of a set's matrix accepted, at least 1 (default 1000)",
            ),
            JSON_OPT,
            HELP_OPT,
        ],
    },
    FILES_GROUP],
    example: "mortise audit sample-frf/unit-casing.uff sample-frf/brackets.uffb --coherence-min 0.8",
};

pub const LISTEN: Command = Command {
    name: "listen",
    summary: "write the sound of a predicted sound-pressure spectrum as a calibrated WAV file",
    usage: "mortise listen FILE -o OUT.wav [--output NAME] [--seconds S] [--rate R] [--full-scale-pa P] [--json]",
    about: "Reads FILE (a result of 'mortise run', e.g. OUTDIR/bedroom.csv) and makes the sound of its \
            sound-pressure spectrum: each line a sinusoid at its frequency with its amplitude and, for \
            peak and RMS spectra, its phase (autopower and PSD lines get seeded random phases), so the \
            sound's 1/3-octave band levels are the predicted ones. Writes a mono 32-bit float WAV whose \
            sample value 1.0 stands for the full-scale pressure it prints, with the level a full-scale \
            sine must play at to hear the predicted level. Listen at a low volume first.",
    groups: &[
        Group {
            title: "options",
            opts: &[
                val("o", "OUT.wav", "the WAV file to write (required)"),
                val(
                    "output",
                    "NAME",
                    "which spectrum: a set name or an output DOF label (default: the file's first \
                     sound-pressure spectrum)",
                ),
                val("seconds", "S", "duration, above 0 and at most 600 (default 10)"),
                val("rate", "R", "samples per second, 8000 to 192000 (default 48000)"),
                val(
                    "full-scale-pa",
                    "P",
                    "pressure in Pa of sample value 1.0; give the same value for a baseline and its \
                     variants to compare them at one gain (default: the peak pressure + 1 dB)",
                ),
                JSON_OPT,
                HELP_OPT,
            ],
        },
        LIMITS_GROUP,
        FILES_GROUP,
    ],
    example: "mortise listen results/bedroom.csv -o bedroom.wav --seconds 5",
};

/// Options shared by `spectrum` and `estimate`: the averaging and the channels.
const TIME_GROUP: Group = Group {
    title: "time data (Welch averaging as scipy.signal.welch; the sets record these choices)",
    opts: &[
        val(
            "segment",
            "N",
            "samples per segment, the FFT length: lines every fs/N Hz from 0 to fs/2; refused \
             when longer than the record (default 4096)",
        ),
        val(
            "overlap",
            "F",
            "fraction of a segment shared with the next, from 0 up to (not including) 1 \
             (default 0.5)",
        ),
        val(
            "window",
            "W",
            "rectangular, hann, hamming, flat-top (amplitudes of tones), force:WIDTH_S or \
             exponential:TAU_S (impact testing; the exponential window adds 1/TAU_S to every \
             mode's decay rate) (default hann)",
        ),
        val(
            "detrend",
            "D",
            "removed from each segment before the window: none, constant (its mean) or linear \
             (its least-squares line) (default constant)",
        ),
        many(
            "channel",
            "'N=DOF QTY FS UNIT'",
            "a WAV channel to analyse: its number from 1, DOF, quantity, the value of full scale \
             (sample 1.0) and its unit, e.g. '1=rig:1+Z force 500 N'; required for WAV files \
             (channels not described are left out, with a note), refused for UFF and CSV \
             files, whose channels carry their DOFs and units",
        ),
        TIME_MAP_OPT,
        val(
            "to",
            "FORMAT",
            "uff, uff-binary or csv (mortise CSV, lossless); default: from OUT's extension",
        ),
    ],
};

/// A supplier's time CSV read through a time column map (spectrum,
/// estimate, orders).
const TIME_MAP_OPT: Opt = val(
    "time-map",
    "FILE",
    "a supplier's time CSV: a JSON file mapping its columns (delimiter, skip_rows, header_line, \
     unit_line, decimal_comma, time and time_unit s or ms, channels [{column, dof, unit}]; \
     columns by name or number; see README 'time CSV through a column map')",
);

/// Triggered impact records, for `estimate` and `spectrum --kind esd`.
const IMPACT_GROUP: Group = Group {
    title: "impact test (with --trigger: one record per hit instead of Welch segments; --segment, \
            --overlap, --window and --detrend are then refused)",
    opts: &[
        val(
            "trigger",
            "LEVEL",
            "trigger level on the force channel (the one --input), in SI (N): a hit starts where \
             |force| first reaches it after the previous record",
        ),
        val(
            "record-length",
            "S",
            "seconds per record (required with --trigger; lines every 1/S Hz)",
        ),
        val(
            "pre-trigger",
            "S",
            "seconds kept before the trigger (default 0.01)",
        ),
        val(
            "double-hit",
            "F",
            "a second pulse reaching F times the peak within the record flags a double hit; the \
             record is left out (default 0.1)",
        ),
        val(
            "force-width",
            "S",
            "force window: the force channel kept for S seconds from the record start, 0 after \
             (default: kept whole)",
        ),
        val(
            "decay",
            "S",
            "exponential window exp(-t/S) on every channel (adds 1/S to every mode's decay rate) \
             (default: none)",
        ),
    ],
};

pub const SPECTRUM: Command = Command {
    name: "spectrum",
    summary: "spectra (PSD, autopower, linear, cross) of recorded time data (WAV, UFF 58 time responses, time CSV)",
    usage: "mortise spectrum FILE -o OUT [--kind KIND] [--reference DOF] [time-data options] [--json]",
    about: "Reads FILE, a WAV recording (PCM 8/16/24/32-bit or float 32/64-bit, any number of \
            channels, read in blocks so its length is not bounded by memory; each channel \
            described with --channel), a UFF file of time responses (function type 1, all of \
            one rate and length) or a time CSV (header 'time [s], DOF [UNIT], ...', one row per \
            sample, increasing even times), averages each channel's spectrum over overlapping windowed \
            segments (Welch) and writes the spectra as a spectrum set per quantity, ready for \
            'respond' and the other steps: the kind (autopower, PSD, RMS or peak line spectrum, \
            cross spectrum) is stored with the values, and the window, segment, overlap, \
            detrending and number of averages in the set's provenance.",
    groups: &[
        Group {
            title: "options",
            opts: &[
                val("o", "OUT", "the file to write (required)"),
                val(
                    "kind",
                    "KIND",
                    "psd (unit²/Hz), autopower (unit², mean square per line), rms or peak (line \
                     spectrum with the phase against --reference), cross (conj(X_ref)·X per \
                     line, against --reference), esd (unit²·s/Hz: the mean energy of an impact \
                     record per hertz; needs --trigger, --record-length and --input) (default psd)",
                ),
                val(
                    "reference",
                    "DOF",
                    "the channel phases are measured against (needed by rms, peak and cross)",
                ),
                val(
                    "input",
                    "DOF",
                    "the force channel the impact records are triggered on (--kind esd only)",
                ),
                JSON_OPT,
                HELP_OPT,
            ],
        },
        TIME_GROUP,
        IMPACT_GROUP,
        LIMITS_GROUP,
        FILES_GROUP,
    ],
    example: "mortise spectrum bench.wav -o bench-psd.csv --channel '1=unit:1+Z acceleration 98.0665 m/s^2' --segment 8192",
};

pub const ESTIMATE: Command = Command {
    name: "estimate",
    summary: "FRFs with coherence (H1, H2, Hv) from force and response channels of recorded time data",
    usage: "mortise estimate FILE -o OUT --input DOF [--input DOF] [--estimator E] [time-data options] [--json]",
    about: "Reads FILE (as 'mortise spectrum' does), averages the auto and cross spectra of the \
            input (force) channels and every other channel (the responses) over windowed \
            segments, and writes the FRFs from the inputs to the responses, one set per response \
            quantity, with the coherence kept on the set: the multiple coherence of each \
            response, which with one input is the ordinary coherence. H1 (default) is \
            unbiased by noise on the responses, H2 (one input only) by noise on the input, Hv \
            (total least squares) lies between them. Several inputs need their cross-spectral \
            matrix regular at every line (not fully correlated); 0 Hz is left out.\n\n\
            With --trigger, a hammer test: each hit on the force channel gives one record \
            (pre-trigger, length, force and exponential windows); records with a double hit or an \
            overload (a WAV channel within 0.1 % of its full scale) are left out and listed.",
    groups: &[
        Group {
            title: "options",
            opts: &[
                val("o", "OUT", "the file to write (required)"),
                many("input", "DOF", "an input (force) channel; at least one"),
                val("estimator", "E", "h1, h2 or hv (default h1)"),
                JSON_OPT,
                HELP_OPT,
            ],
        },
        TIME_GROUP,
        IMPACT_GROUP,
        LIMITS_GROUP,
        FILES_GROUP,
    ],
    example: "mortise estimate hammer.uff -o bracket-frf.uff --input bracket:1+Z --window exponential:0.5",
};

pub const ORDERS: Command = Command {
    name: "orders",
    summary: "order tracks of a run-up or run-down (WAV, UFF time responses, time CSV): one order's amplitude over frequency",
    usage: "mortise orders FILE -o OUT --order O (--speed T:RPM,... | --tach DOF --tach-level L --pulses-per-rev N) [options]",
    about: "Reads FILE (as 'mortise spectrum' does, a WAV file with --channel), finds the shaft angle \
            from a speed profile (--speed, rpm linear between the points) or a tachometer channel \
            (--tach: each upward crossing of --tach-level is 1/--pulses-per-rev revolution), resamples \
            every other channel to --samples-per-rev samples a revolution (cubic interpolation), and \
            takes order --order from Hann-windowed blocks of --revolutions revolutions. Writes a \
            peak spectrum set per quantity whose lines are the order's frequency (order × rpm / 60) \
            at each block's speed, the complex amplitude's phase referred to angle 0: a run-up becomes \
            an excitation over frequency. The speed must rise or fall throughout; --order times \
            --revolutions must be a whole number. --by-speed STEP tabulates the tracks against \
            speed for a speed sweep (the recipe's by_speed rows).",
    groups: &[
        Group {
            title: "options",
            opts: &[
                val("o", "OUT", "the file to write (required)"),
                val("order", "O", "the order to track, e.g. 2 or 0.5 (required)"),
                val(
                    "speed",
                    "T:RPM,...",
                    "the speed profile: times in s and speeds in rpm, e.g. '0:600,20:3600'",
                ),
                val("tach", "DOF", "the tachometer channel (left out of the tracks)"),
                val("tach-level", "L", "the tachometer's trigger level, in its SI unit (default 0.5)"),
                val("pulses-per-rev", "N", "tachometer pulses per revolution (default 1)"),
                val(
                    "revolutions",
                    "R",
                    "revolutions per block (order resolution 1/R; default 8)",
                ),
                val(
                    "samples-per-rev",
                    "S",
                    "samples per revolution after resampling (orders up to S/2 − 1; default 64)",
                ),
                val(
                    "by-speed",
                    "STEP",
                    "also write OUT's stem + '.by-speed.json': each channel's track read every STEP rev/s, as a speed sweep's orders entries with by_speed rows [speed rev/s, re, im]",
                ),
                many(
                    "channel",
                    "'N=DOF QTY FS UNIT'",
                    "a WAV channel, as for 'mortise spectrum' (required for WAV files)",
                ),
                TIME_MAP_OPT,
                val(
                    "to",
                    "FORMAT",
                    "uff, uff-binary or csv; default: from OUT's extension",
                ),
                JSON_OPT,
                HELP_OPT,
            ],
        },
        LIMITS_GROUP,
        FILES_GROUP,
    ],
    example: "mortise orders runup.uff -o fan-order2.csv --order 2 --speed 0:600,20:3600",
};

pub const DEMO: Command = Command {
    name: "demo",
    summary: "write (or check) the demo scenario's supplier files and recipe",
    usage: "mortise demo [-o DIR] [--check]",
    about: "Writes the invented demo scenario (a heat-pump outdoor unit on a timber-frame wall, \
            a bedroom behind it): four suppliers' files, each in its own format and units, and \
            heat-pump.recipe.json, synthesized deterministically by mortise itself. Run the \
            recipe with 'mortise run DIR/heat-pump.recipe.json -o OUTDIR'.",
    groups: &[Group {
        title: "options",
        opts: &[
            val(
                "o",
                "DIR",
                "the directory to write into (created if needed); default sample-frf",
            ),
            flag(
                "check",
                "write nothing: compare the files in DIR with what this build synthesizes and \
                 fail (exit 1) if any differs or is missing",
            ),
            HELP_OPT,
        ],
    }],
    example: "mortise demo -o demo-files",
};

pub const HELP: Command = Command {
    name: "help",
    summary: "the list of commands, or one command's help: mortise help COMMAND",
    usage: "mortise help [COMMAND | recipe]",
    about: "Without an operand, lists the commands. With a command's name, prints what the \
            command does, every option with its meaning and default, and an example (as \
            'mortise COMMAND --help' and 'mortise COMMAND -h' do). 'mortise help recipe' tells \
            where the recipe format is described.",
    groups: &[Group {
        title: "options",
        opts: &[HELP_OPT],
    }],
    example: "mortise help couple",
};

pub const VERSION: Command = Command {
    name: "version",
    summary: "mortise's version (also --version)",
    usage: "mortise version",
    about: "Prints the version of mortise.",
    groups: &[Group {
        title: "options",
        opts: &[HELP_OPT],
    }],
    example: "mortise version",
};

/// Every command, in the order the general help lists them.
pub const COMMANDS: &[Command] = &[
    INSPECT, CONVERT, RUN, SWEEP, MERGE, DIAGRAM, COUPLE, AUDIT, LISTEN, SPECTRUM, ESTIMATE,
    ORDERS, DEMO, HELP, VERSION,
];

pub const SWEEP: Command = Command {
    name: "sweep",
    summary: "compute a recipe's sweep, whole or one shard K/N of its points, as NAME.sweep.csv",
    usage: "mortise sweep RECIPE -o DIR [--shard K/N] [--threads T] [--monte-carlo N [--seed S]] [--read-outside] [limits]",
    about: "Runs the \"sweep\" section of RECIPE ('mortise help recipe'): the baseline at each \
            point, each point the variant with that value, and writes every response and \
            path-total level against the parameter to DIR/NAME.sweep.csv (its layout in the \
            README). With --shard K/N only the K-th of N contiguous slices of the points is \
            computed; the file records the recipe's SHA-256 and the slice, and 'mortise merge' \
            folds the N shard directories into the file an unsharded run writes, byte for byte. \
            Each shard is independent: a batch engine's array job runs them in any order.\n\n\
            With --monte-carlo N the points are the N draws of a Monte Carlo of the recipe's \
            uncertain components (as 'mortise run --monte-carlo'): each row one draw's levels, \
            written to DIR/monte-carlo.sweep.csv; a draw depends on the seed and its index only, \
            so shards split the draws as they split a sweep.",
    groups: &[
        Group {
            title: "options",
            opts: &[
                val("o", "DIR", "the directory to write NAME.sweep.csv into (required)"),
                val(
                    "shard",
                    "K/N",
                    "compute only the K-th (1 to N) of N contiguous slices of the points; \
                     default: every point",
                ),
                val(
                    "threads",
                    "T",
                    "threads computing points, 1 to 256 (default 2); the numbers do not depend on it",
                ),
                val(
                    "monte-carlo",
                    "N",
                    "instead of the recipe's sweep, N draws (2 or more) of the components that \
                     have an 'uncertainty' key, one row of levels per draw",
                ),
                val(
                    "seed",
                    "S",
                    "seed of the --monte-carlo draws, a whole number (default 1)",
                ),
                HELP_OPT,
            ],
        },
        LIMITS_GROUP,
        Group {
            title: "files",
            opts: &[
                flag(
                    "read-outside",
                    "let the recipe name files outside its own folder (default: refused)",
                ),
                MAX_FILE_OPT,
            ],
        },
    ],
    example: "mortise sweep isolator-sweep.recipe.json --shard 2/4 -o shards/2",
};

pub const MERGE: Command = Command {
    name: "merge",
    summary: "fold the shard directories of 'mortise sweep --shard' into the whole sweep's files",
    usage: "mortise merge DIR... -o OUT",
    about:
        "Reads every NAME.sweep.csv in each DIR and writes, for each NAME, the file of the whole \
            sweep to OUT/NAME.sweep.csv: byte for byte what 'mortise sweep RECIPE -o OUT' writes \
            without --shard. Refused: shards of different recipes (both SHA-256 named), of \
            different sweeps, missing or overlapping slices.",
    groups: &[Group {
        title: "options",
        opts: &[
            val(
                "o",
                "OUT",
                "the directory to write the merged files into (required)",
            ),
            MAX_FILE_OPT,
            HELP_OPT,
        ],
    }],
    example: "mortise merge shards/1 shards/2 shards/3 shards/4 -o whole",
};

pub fn command(name: &str) -> Option<&'static Command> {
    COMMANDS.iter().find(|c| c.name == name)
}

const WIDTH: usize = 100;
const COL: usize = 26;

/// Words of `text` in lines of at most `width` characters (a longer word stays whole).
fn wrap(text: &str, width: usize) -> Vec<String> {
    let mut lines = Vec::new();
    let mut line = String::new();
    for w in text.split_whitespace() {
        if !line.is_empty() && line.chars().count() + 1 + w.chars().count() > width {
            lines.push(std::mem::take(&mut line));
        }
        if !line.is_empty() {
            line.push(' ');
        }
        line.push_str(w);
    }
    if !line.is_empty() {
        lines.push(line);
    }
    lines
}

impl Command {
    /// Every option the command accepts.
    pub fn options(&self) -> impl Iterator<Item = &'static Opt> {
        self.groups.iter().flat_map(|g| g.opts.iter())
    }
    pub fn option(&self, name: &str) -> Option<&'static Opt> {
        self.options().find(|o| o.name == name)
    }
    pub fn takes_json(&self) -> bool {
        self.option("json").is_some()
    }
    /// The command's help text.
    pub fn help(&self) -> String {
        let mut s = format!("mortise {}: {}\n\nusage: {}\n", self.name, self.summary, {
            let mut u = wrap(self.usage, WIDTH - 7);
            for l in u.iter_mut().skip(1) {
                l.insert_str(0, "         ");
            }
            u.join("\n")
        });
        for para in self.about.split("\n\n") {
            s.push('\n');
            for l in wrap(para, WIDTH) {
                s.push_str(&l);
                s.push('\n');
            }
        }
        for g in self.groups {
            s.push('\n');
            for l in wrap(&format!("{}:", g.title), WIDTH) {
                s.push_str(&l);
                s.push('\n');
            }
            for o in g.opts {
                let mut head = format!("  {}", o.spelled());
                if o.name == "help" {
                    head = "  -h, --help".to_string();
                }
                if !o.is_flag() {
                    head.push(' ');
                    head.push_str(o.value);
                }
                let mut text = o.help.to_string();
                if o.repeat {
                    text.push_str(" (may be repeated)");
                }
                let body = wrap(&text, WIDTH - COL);
                let pad = |n: usize| " ".repeat(n);
                let mut lines = body.into_iter();
                if head.chars().count() < COL - 1 {
                    let n = head.chars().count();
                    s.push_str(&head);
                    s.push_str(&pad(COL - n));
                    s.push_str(&lines.next().unwrap_or_default());
                    s.push('\n');
                } else {
                    s.push_str(&head);
                    s.push('\n');
                }
                for l in lines {
                    s.push_str(&pad(COL));
                    s.push_str(&l);
                    s.push('\n');
                }
            }
        }
        s.push_str(&format!("\nexample:\n  {}\n", self.example));
        s
    }
}

/// The general help: every command with one line, and where to read more.
pub fn general_help() -> String {
    let mut s = String::from(
        "mortise: FRF coupling and transfer-path prediction, offline\n\n\
         usage: mortise COMMAND [OPERANDS] [OPTIONS]\n\ncommands:\n",
    );
    for c in COMMANDS {
        let mut lines = wrap(c.summary, WIDTH - 12).into_iter();
        s.push_str(&format!(
            "  {:<10}{}\n",
            c.name,
            lines.next().unwrap_or_default()
        ));
        for l in lines {
            s.push_str(&format!("            {l}\n"));
        }
    }
    s.push('\n');
    for para in [
        "'mortise help COMMAND' (or 'mortise COMMAND --help', or -h) prints what a command does, \
         every option with its meaning and default, and an example; 'mortise help recipe' tells \
         where the recipe format is described.",
        "exit codes: 0 success; 1 bad data or a failed computation (anything from a file or a \
         recipe, an output that cannot be written); 2 a bad command line (unknown command or \
         option, missing operand, bad option value); 3 an internal error (a bug in mortise: \
         please report it).",
        "With --json (inspect, convert, run, couple, audit) standard output holds exactly one \
         JSON document, also when something fails (\"ok\": false, the exit code, the error with \
         its place); messages go to standard error.",
        crate::predict::CAUTION,
    ] {
        for l in wrap(para, WIDTH) {
            s.push_str(&l);
            s.push('\n');
        }
        s.push('\n');
    }
    s.pop();
    s
}
