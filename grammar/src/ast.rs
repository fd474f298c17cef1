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
    /// `check COND ["description"]`: `cond` is a condition: a comparison
    /// (`T2 <= 220 degC`), a chain (`0.88 <= x2 <= 1`), or conditions joined
    /// by `and` / `or` / `not` (any boolean expression is accepted by the
    /// grammar; the checker decides what it supports).
    Check {
        cond: Expr,
        description: Option<StringLit>,
    },
    /// `case NAME: INPUT = EXPR, INPUT = EXPR ... ["description"]`
    Case {
        name: Ident,
        settings: Vec<CaseSetting>,
        description: Option<StringLit>,
    },
    /// `sweep INPUT from A to B step D show NAME, ... ["description"]`,
    /// `sweep INPUT from A to B count N show ...`,
    /// `sweep INPUT over A, B, C show ...`
    Sweep {
        input: Ident,
        points: SweepPoints,
        /// The shown quantities (at least one); each a name path.
        show: Vec<Ident>,
        description: Option<StringLit>,
    },
    /// `find INPUT in LOW .. HIGH where LEFT = RIGHT ["description"]`
    /// (expressions boxed to keep every statement small).
    Find {
        input: Ident,
        low: Box<Expr>,
        high: Box<Expr>,
        left: Box<Expr>,
        /// Span of the `=` between `left` and `right`.
        eq_span: Span,
        right: Box<Expr>,
        description: Option<StringLit>,
    },
    /// `use "OTHER.sheaf" as PREFIX`
    Use { path: StringLit, prefix: Ident },
    /// `gauge EXPR ["description"]`: reference pressure of gauge units.
    Gauge {
        value: Expr,
        description: Option<StringLit>,
    },
    /// An empty line (kept so the formatter can preserve paragraphing).
    Blank,
}

/// One `INPUT = EXPR` of a `case`.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct CaseSetting {
    /// The input set (a name path, e.g. `p2` or `site.T_amb`).
    pub input: Ident,
    pub value: Expr,
    /// From the input's first character to the value's last.
    pub span: Span,
}

/// The points of a `sweep` (expressions boxed to keep every statement
/// small).
#[derive(Clone, Debug, PartialEq, Serialize)]
pub enum SweepPoints {
    /// `from A to B step D`
    Step {
        from: Box<Expr>,
        to: Box<Expr>,
        step: Box<Expr>,
    },
    /// `from A to B count N`
    Count {
        from: Box<Expr>,
        to: Box<Expr>,
        count: Box<Expr>,
    },
    /// `over A, B, C`
    Over(Vec<Expr>),
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

/// `and` / `or`.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
pub enum LogicOp {
    And,
    Or,
}

impl LogicOp {
    pub fn keyword(self) -> &'static str {
        match self {
            LogicOp::And => "and",
            LogicOp::Or => "or",
        }
    }
}

/// One link `OP operand` of a comparison chain.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct CompareLink {
    pub op: CompareOp,
    pub op_span: Span,
    pub operand: Expr,
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

impl Expr {
    /// `(left, op, op_span, right)` when this is one comparison `left OP
    /// right` (not a chain, not parenthesised).
    pub fn as_single_comparison(&self) -> Option<(&Expr, CompareOp, Span, &Expr)> {
        match &self.kind {
            ExprKind::Compare { first, rest } => match rest.as_slice() {
                [link] => Some((first, link.op, link.op_span, &link.operand)),
                _ => None,
            },
            _ => None,
        }
    }
}

/// Dropping an expression does not recurse: a left-associative chain
/// (`a1 + a2 + ... + a100000`) is a tree as deep as it is long, and a
/// recursive drop of it would exhaust the stack.
impl Drop for Expr {
    fn drop(&mut self) {
        if !has_children(&self.kind) {
            return;
        }
        let mut stack = Vec::new();
        take_children(&mut self.kind, &mut stack);
        while let Some(mut e) = stack.pop() {
            take_children(&mut e.kind, &mut stack);
            // `e` is dropped here with no children left.
        }
    }
}

fn has_children(k: &ExprKind) -> bool {
    !matches!(
        k,
        ExprKind::Number { .. } | ExprKind::Str(_) | ExprKind::Name(_)
    )
}

/// Moves the sub-expressions of `kind` onto `stack`, leaving a leaf.
fn take_children(kind: &mut ExprKind, stack: &mut Vec<Expr>) {
    if !has_children(kind) {
        return;
    }
    match std::mem::replace(kind, ExprKind::Name(String::new())) {
        ExprKind::Number { .. } | ExprKind::Str(_) | ExprKind::Name(_) => {}
        ExprKind::Neg(a) | ExprKind::Not(a) | ExprKind::Paren(a) => stack.push(*a),
        ExprKind::Field { base, .. } => stack.push(*base),
        ExprKind::Binary { left, right, .. } | ExprKind::Logic { left, right, .. } => {
            stack.push(*left);
            stack.push(*right);
        }
        ExprKind::Call { args, .. } => stack.extend(args.into_iter().map(|a| a.value)),
        ExprKind::Compare { first, rest } => {
            stack.push(*first);
            stack.extend(rest.into_iter().map(|l| l.operand));
        }
        ExprKind::If {
            cond,
            then_branch,
            else_branch,
        } => {
            stack.push(*cond);
            stack.push(*then_branch);
            stack.push(*else_branch);
        }
    }
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
    /// A comparison or a comparison chain: `a < b` is `first` = a and one
    /// link (`<`, b); `0.88 <= x2 <= 1` has two links. A chain means every
    /// adjacent pair holds.
    Compare {
        first: Box<Expr>,
        rest: Vec<CompareLink>,
    },
    /// `left and right`, `left or right` (left-associative; `and` binds
    /// tighter than `or`).
    Logic {
        op: LogicOp,
        op_span: Span,
        left: Box<Expr>,
        right: Box<Expr>,
    },
    /// `not x` (binds looser than a comparison: `not a < b` is `not (a < b)`).
    Not(Box<Expr>),
    /// `if cond then then_branch else else_branch` (lowest precedence).
    If {
        cond: Box<Expr>,
        then_branch: Box<Expr>,
        else_branch: Box<Expr>,
    },
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
