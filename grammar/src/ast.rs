//! The worksheet syntax tree. Every node carries the byte span of the source
//! text it was parsed from, so that later stages (checker, evaluator, xlsx
//! writer, `pull`) can point at, quote or rewrite exactly that text.

use serde::Serialize;

/// Half-open byte range `start..end` into the worksheet source.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Default, Serialize)]
pub struct Span {
    pub start: usize,
    pub end: usize,
}

impl Span {
    pub fn new(start: usize, end: usize) -> Self {
        Span { start, end }
    }
    /// The smallest span covering both.
    pub fn join(self, other: Span) -> Span {
        Span {
            start: self.start.min(other.start),
            end: self.end.max(other.end),
        }
    }
    /// The text this span covers (empty if out of range).
    pub fn slice(self, src: &str) -> &str {
        src.get(self.start..self.end).unwrap_or("")
    }
}

/// An identifier with its span.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Ident {
    pub name: String,
    pub span: Span,
}

/// A parsed worksheet: statements in file order.
#[derive(Clone, Debug, PartialEq, Serialize, Default)]
pub struct Worksheet {
    pub statements: Vec<Statement>,
}

#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Statement {
    pub kind: StatementKind,
    /// Span of the whole statement (without the line end).
    pub span: Span,
}

#[derive(Clone, Debug, PartialEq, Serialize)]
pub enum StatementKind {
    /// `#`, `##`, `###` heading; `level` is the number of `#`.
    Heading { level: u8, text: String },
    /// `> text` note shown in reports.
    Note { text: String },
    /// `// text` comment (kept for the formatter, shown nowhere).
    Comment { text: String },
    /// `meta key = "value"`: package metadata (prepared by, revision, ...).
    Meta { key: Ident, value: StringLit },
    /// `input NAME = EXPR ["description"]`
    Input {
        name: Ident,
        value: Expr,
        description: Option<StringLit>,
    },
    /// `NAME [: UNIT] = EXPR ["description"]`
    Define {
        name: Ident,
        unit: Option<UnitExpr>,
        value: Expr,
        description: Option<StringLit>,
    },
    /// `check EXPR OP EXPR ["description"]`
    Check {
        left: Expr,
        op: CompareOp,
        op_span: Span,
        right: Expr,
        description: Option<StringLit>,
    },
    /// An empty line (kept so the formatter can preserve paragraphing).
    Blank,
}

/// A string literal; `value` has escapes resolved, `span` includes the quotes.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct StringLit {
    pub value: String,
    pub span: Span,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
pub enum CompareOp {
    Lt,
    Le,
    Gt,
    Ge,
    Eq,
    Ne,
}

impl CompareOp {
    pub fn symbol(self) -> &'static str {
        match self {
            CompareOp::Lt => "<",
            CompareOp::Le => "<=",
            CompareOp::Gt => ">",
            CompareOp::Ge => ">=",
            CompareOp::Eq => "==",
            CompareOp::Ne => "!=",
        }
    }
}

#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
pub enum BinOp {
    Add,
    Sub,
    Mul,
    Div,
    Pow,
}

impl BinOp {
    pub fn symbol(self) -> &'static str {
        match self {
            BinOp::Add => "+",
            BinOp::Sub => "-",
            BinOp::Mul => "*",
            BinOp::Div => "/",
            BinOp::Pow => "^",
        }
    }
}

#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Expr {
    pub kind: ExprKind,
    pub span: Span,
}

#[derive(Clone, Debug, PartialEq, Serialize)]
pub enum ExprKind {
    /// A number literal, optionally followed by a unit (`20 degC`).
    /// `text` is the literal as written (for `pull` and the formatter).
    Number {
        value: f64,
        text: String,
        unit: Option<UnitExpr>,
    },
    /// A string literal.
    Str(String),
    /// A name reference.
    Name(String),
    /// Unary minus.
    Neg(Box<Expr>),
    Binary {
        op: BinOp,
        left: Box<Expr>,
        right: Box<Expr>,
    },
    /// `f(a, b, name: c)`
    Call { func: Ident, args: Vec<Arg> },
    /// `base.field`
    Field { base: Box<Expr>, field: Ident },
    /// `( inner )` — kept so spans and the formatter see the parentheses.
    Paren(Box<Expr>),
}

#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Arg {
    /// `Some` for a named argument `name: value`.
    pub name: Option<Ident>,
    pub value: Expr,
    pub span: Span,
}

/// A unit expression: `kJ/(kg K)`, `m^3/h`, `1/s`, `degC`.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct UnitExpr {
    pub kind: UnitKind,
    pub span: Span,
}

#[derive(Clone, Debug, PartialEq, Serialize)]
pub enum UnitKind {
    /// A unit symbol as written, e.g. `kJ`, `degC`, `°C`.
    Atom(String),
    /// The number `1` in `1/s`.
    One,
    Mul(Box<UnitExpr>, Box<UnitExpr>),
    Div(Box<UnitExpr>, Box<UnitExpr>),
    Pow(Box<UnitExpr>, i32),
}
