//! A hand-written first try for the most common statement lines
//! (definitions, `input` and `check` with arithmetic, comparisons, calls,
//! fields, numbers with plain units, plain strings): one pass over the
//! bytes, no pest machinery. It accepts a strict subset of what the pest
//! entry rules accept and builds the same tree with the same
//! [`Builder`] steps (precedence, chains, depth); anything else — keywords,
//! `if`/`and`/`or`/`not`, non-ASCII units,
//! escapes in strings, a tolerance `+ -2`, any error — returns `None`, and
//! the line goes to the pest rules, which also word every error.
//! `fast_path_tests` in `parser.rs` checks that whatever this accepts, the
//! entry rules accept with the same tree.

use super::{
    Builder, Ctx, INLINE_DEPTH, Infix, Node, ParsedLine, Prefix, StackOp, UNode, infix_prec,
    is_keyword,
};
use crate::ast::*;

/// Keywords that are never a unit after a number (`in` and `as` are
/// units there: inch, attosecond).
fn is_unit_keyword(w: &str) -> bool {
    w != "in" && w != "as" && is_keyword(w)
}

fn is_ident_start(c: u8) -> bool {
    c.is_ascii_alphabetic() || c == b'_'
}

fn is_ident_char(c: u8) -> bool {
    c.is_ascii_alphanumeric() || c == b'_'
}

/// The operator-precedence stacks, kept from line to line: nested
/// expressions use the part above their caller's, so a line allocates
/// nothing but its tree (temporary vectors freed between tree nodes would
/// leave holes that scatter the checker's later allocations).
#[derive(Default)]
pub(super) struct Scratch {
    out: Vec<Node>,
    chains: Vec<usize>,
    ops: Vec<StackOp>,
}

struct Hand<'a, 'b> {
    b: &'a Builder<'b>,
    s: &'a mut Scratch,
    text: &'a str,
    bytes: &'a [u8],
    pos: usize,
    /// End of the last token consumed (a pest pair's span without its
    /// trailing blanks ends there).
    last_end: usize,
    /// Parenthesis depth (bounded by the prescan; checked again here).
    depth: usize,
}

/// Parses a statement line of kind `ctx` (definitions, `input`, `check`)
/// when it is in the subset this parser knows; `None` otherwise.
pub(super) fn statement(
    src: &str,
    text: &str,
    start: usize,
    ctx: Ctx,
    scratch: &mut Scratch,
) -> Option<ParsedLine> {
    let b = Builder { base: start, src };
    // Left over from a line given up half-way.
    scratch.out.clear();
    scratch.chains.clear();
    scratch.ops.clear();
    let mut h = Hand {
        b: &b,
        s: scratch,
        text,
        bytes: text.as_bytes(),
        pos: 0,
        last_end: 0,
        depth: 0,
    };
    h.statement(ctx)
}

impl Hand<'_, '_> {
    fn peek(&self) -> Option<u8> {
        self.bytes.get(self.pos).copied()
    }

    fn at(&self, k: usize) -> Option<u8> {
        self.bytes.get(self.pos + k).copied()
    }

    fn skip_ws(&mut self) {
        while matches!(self.peek(), Some(b' ' | b'\t')) {
            self.pos += 1;
        }
    }

    fn span(&self, a: usize, z: usize) -> Span {
        Span::new(self.b.base + a, self.b.base + z)
    }

    /// Consumes `n` bytes as one token.
    fn token(&mut self, n: usize) -> Span {
        let s = self.span(self.pos, self.pos + n);
        self.pos += n;
        self.last_end = self.pos;
        s
    }

    /// An ASCII name (`[A-Za-z_][A-Za-z0-9_]*`); `None` for a keyword or
    /// when a non-ASCII character follows.
    fn ident(&mut self) -> Option<Ident> {
        let a = self.pos;
        if !is_ident_start(self.peek()?) {
            return None;
        }
        let mut z = a + 1;
        while self.bytes.get(z).copied().is_some_and(is_ident_char) {
            z += 1;
        }
        if self.bytes.get(z).is_some_and(|c| !c.is_ascii()) {
            return None;
        }
        let name = &self.text[a..z];
        if is_keyword(name) {
            return None;
        }
        let span = self.token(z - a);
        Some(Ident {
            name: name.to_string(),
            span,
        })
    }

    fn statement(&mut self, ctx: Ctx) -> Option<ParsedLine> {
        self.skip_ws();
        let first = self.pos;
        let kind = match ctx {
            Ctx::Define => {
                let name = self.ident()?;
                self.skip_ws();
                // `NAME: UNIT = ...`
                let unit = if self.peek()? == b':' {
                    self.pos += 1;
                    self.skip_ws();
                    let (u, _) = self.unit_loose()?;
                    self.skip_ws();
                    Some(u)
                } else {
                    None
                };
                let (value, description) = self.assigned()?;
                StatementKind::Define {
                    name,
                    unit,
                    value,
                    description,
                }
            }
            Ctx::Input => {
                self.keyword("input")?;
                self.skip_ws();
                let name = self.ident()?;
                self.skip_ws();
                let (value, description) = self.assigned()?;
                StatementKind::Input {
                    name,
                    value,
                    description,
                }
            }
            Ctx::Check => {
                self.keyword("check")?;
                let cond = self.expr()?.0;
                let description = self.description()?;
                StatementKind::Check { cond, description }
            }
            _ => return None,
        };
        let end = self.last_end;
        // Then only a trailing comment.
        self.skip_ws();
        let trailing_comment = match self.peek() {
            None => None,
            Some(b'/') if self.at(1) == Some(b'/') => {
                let a = self.pos;
                let z = self.text.trim_end_matches([' ', '\t']).len();
                Some(self.span(a, z.max(a + 2)))
            }
            Some(_) => return None,
        };
        Some(ParsedLine {
            stmt: Statement {
                kind,
                span: self.span(first, end),
            },
            trailing_comment,
        })
    }

    fn keyword(&mut self, word: &str) -> Option<()> {
        let rest = self.text.get(self.pos..)?;
        if !rest.starts_with(word)
            || self
                .bytes
                .get(self.pos + word.len())
                .copied()
                .is_some_and(is_ident_char)
        {
            return None;
        }
        self.token(word.len());
        Some(())
    }

    /// An optional description string after the expression.
    /// `= EXPR ["description"]` of a definition or an input.
    fn assigned(&mut self) -> Option<(Expr, Option<StringLit>)> {
        if self.peek()? != b'=' {
            return None;
        }
        self.pos += 1;
        let value = self.expr()?.0;
        Some((value, self.description()?))
    }

    fn description(&mut self) -> Option<Option<StringLit>> {
        self.skip_ws();
        if self.peek() == Some(b'"') {
            Some(Some(self.string()?))
        } else {
            Some(None)
        }
    }

    /// `"..."` without escapes.
    fn string(&mut self) -> Option<StringLit> {
        let a = self.pos;
        let mut z = a + 1;
        loop {
            match self.bytes.get(z)? {
                b'"' => break,
                b'\\' => return None,
                _ => z += 1,
            }
        }
        let value = self.text[a + 1..z].to_string();
        let span = self.token(z + 1 - a);
        Some(StringLit { value, span })
    }

    /// An expression: operands and infix operators, precedence applied
    /// as in [`Builder::expr`] (same stacks, same `reduce`).
    fn expr(&mut self) -> Option<Node> {
        // This expression's part of the stacks starts here.
        let (out0, chains0, ops0) = (self.s.out.len(), self.s.chains.len(), self.s.ops.len());
        let mut last_add: Option<Span> = None;
        loop {
            // Prefix operators.
            loop {
                self.skip_ws();
                let op = match self.peek()? {
                    b'-' => Prefix::Neg,
                    b'+' => Prefix::Pos,
                    _ => break,
                };
                if op == Prefix::Neg && last_add.is_some() {
                    // `+ -2` (a tolerance?) or `+ -x`: left to the pest
                    // rules, which word the tolerance error.
                    return None;
                }
                last_add = None;
                let span = self.token(1);
                self.s.ops.push(StackOp::Prefix { op, span });
            }
            // The operand and its fields.
            let mut node = self.primary()?;
            loop {
                let save = self.pos;
                self.skip_ws();
                if self.peek() != Some(b'.') {
                    self.pos = save;
                    break;
                }
                let fa = self.pos;
                self.pos += 1;
                self.skip_ws();
                let field = self.ident()?;
                let fspan = self.span(fa, self.last_end);
                let d = self.b.check_depth(node.1 + 1, fspan).ok()?;
                let span = node.0.span.join(fspan);
                node = (
                    Expr {
                        kind: ExprKind::Field {
                            base: Box::new(node.0),
                            field,
                        },
                        span,
                    },
                    d,
                );
            }
            self.s.chains.push(1);
            self.s.out.push(node);
            // An infix operator, or the end of the expression.
            self.skip_ws();
            let (op, n) = match (self.peek(), self.at(1)) {
                (Some(b'+'), _) => (Infix::Bin(BinOp::Add), 1),
                (Some(b'-'), _) => (Infix::Bin(BinOp::Sub), 1),
                (Some(b'*'), _) => (Infix::Bin(BinOp::Mul), 1),
                (Some(b'/'), Some(b'/')) => break,
                (Some(b'/'), _) => (Infix::Bin(BinOp::Div), 1),
                (Some(b'^'), _) => (Infix::Bin(BinOp::Pow), 1),
                (Some(b'<'), Some(b'=')) => (Infix::Cmp(CompareOp::Le), 2),
                (Some(b'>'), Some(b'=')) => (Infix::Cmp(CompareOp::Ge), 2),
                (Some(b'!'), Some(b'=')) => (Infix::Cmp(CompareOp::Ne), 2),
                (Some(b'='), Some(b'=')) => (Infix::Cmp(CompareOp::Eq), 2),
                (Some(b'<'), _) => (Infix::Cmp(CompareOp::Lt), 1),
                (Some(b'>'), _) => (Infix::Cmp(CompareOp::Gt), 1),
                _ => break,
            };
            let sp = self.token(n);
            last_add = matches!(op, Infix::Bin(BinOp::Add)).then_some(sp);
            let prec = infix_prec(op);
            let right_assoc = matches!(op, Infix::Bin(BinOp::Pow));
            while self.s.ops.len() > ops0
                && let Some(top) = self.s.ops.last()
            {
                let tp = top.prec();
                if tp > prec || (tp == prec && !right_assoc) {
                    self.reduce()?;
                } else {
                    break;
                }
            }
            self.s.ops.push(StackOp::Infix { op, span: sp });
        }
        while self.s.ops.len() > ops0 {
            self.reduce()?;
        }
        if self.s.out.len() != out0 + 1 {
            return None;
        }
        self.s.chains.truncate(chains0);
        self.s.out.pop()
    }

    fn reduce(&mut self) -> Option<()> {
        let s = &mut *self.s;
        self.b.reduce(&mut s.out, &mut s.chains, &mut s.ops).ok()
    }

    fn primary(&mut self) -> Option<Node> {
        self.skip_ws();
        let c = self.peek()?;
        if is_ident_start(c) {
            let id = self.ident()?;
            let save = self.pos;
            self.skip_ws();
            if self.peek() != Some(b'(') {
                self.pos = save;
                let span = id.span;
                return Some((
                    Expr {
                        kind: ExprKind::Name(id.name),
                        span,
                    },
                    0,
                ));
            }
            return self.call(id);
        }
        match c {
            b'0'..=b'9' => self.number(),
            b'.' if self.at(1).is_some_and(|d| d.is_ascii_digit()) => self.number(),
            b'(' => {
                self.depth += 1;
                if self.depth > INLINE_DEPTH {
                    return None;
                }
                let a = self.pos;
                let open = self.token(1);
                let (e, d) = self.expr()?;
                self.skip_ws();
                if self.peek()? != b')' {
                    return None;
                }
                let close = self.token(1);
                self.depth -= 1;
                let d = self.b.check_depth(d + 1, open).ok()?;
                Some((
                    Expr {
                        kind: ExprKind::Paren(Box::new(e)),
                        span: Span::new(self.b.base + a, close.end),
                    },
                    d,
                ))
            }
            b'"' => {
                let s = self.string()?;
                Some((
                    Expr {
                        kind: ExprKind::Str(s.value),
                        span: s.span,
                    },
                    0,
                ))
            }
            _ => None,
        }
    }

    /// `func(args)` with the `(` next.
    fn call(&mut self, func: Ident) -> Option<Node> {
        self.depth += 1;
        if self.depth > INLINE_DEPTH {
            return None;
        }
        self.token(1);
        let mut args = Vec::new();
        let mut depth = 0;
        self.skip_ws();
        if self.peek()? != b')' {
            loop {
                self.skip_ws();
                let a = self.pos;
                // `name: value`?
                let mut name = None;
                if self.peek().is_some_and(is_ident_start) {
                    let (pos, last) = (self.pos, self.last_end);
                    let mut z = a + 1;
                    while self.bytes.get(z).copied().is_some_and(is_ident_char) {
                        z += 1;
                    }
                    self.pos = z;
                    self.skip_ws();
                    if self.peek() == Some(b':') {
                        self.pos = pos;
                        name = Some(self.ident()?);
                        self.skip_ws();
                        self.token(1);
                    } else {
                        self.pos = pos;
                        self.last_end = last;
                    }
                }
                let (value, d) = self.expr()?;
                depth = depth.max(d);
                args.push(Arg {
                    name,
                    value,
                    span: self.span(a, self.last_end),
                });
                self.skip_ws();
                match self.peek()? {
                    b',' => {
                        self.token(1);
                        self.skip_ws();
                        if self.peek()? == b')' {
                            break;
                        }
                    }
                    b')' => break,
                    _ => return None,
                }
            }
        }
        let close = self.token(1);
        self.depth -= 1;
        let d = self.b.check_depth(depth + 1, func.span).ok()?;
        let span = Span::new(func.span.start, close.end);
        Some((
            Expr {
                kind: ExprKind::Call { func, args },
                span,
            },
            d,
        ))
    }

    /// A number literal and the unit written tight after it.
    fn number(&mut self) -> Option<Node> {
        let a = self.pos;
        let digits = |z: usize| {
            let mut z = z;
            while self.bytes.get(z).is_some_and(u8::is_ascii_digit) {
                z += 1;
            }
            z
        };
        let mut z = digits(a);
        if self.bytes.get(z) == Some(&b'.') && self.bytes.get(z + 1).is_some_and(u8::is_ascii_digit)
        {
            z = digits(z + 1);
        }
        if matches!(self.bytes.get(z), Some(b'e' | b'E')) {
            let mut e = z + 1;
            if matches!(self.bytes.get(e), Some(b'+' | b'-')) {
                e += 1;
            }
            if self.bytes.get(e).is_some_and(u8::is_ascii_digit) {
                z = digits(e);
            }
        }
        let text = self.text[a..z].to_string();
        let value = text.parse::<f64>().ok()?;
        if !value.is_finite() {
            return None;
        }
        let nspan = self.token(z - a);
        let save = self.pos;
        self.skip_ws();
        let (unit, d) = match self.unit()? {
            Some((u, d)) => (Some(u), d),
            None => {
                self.pos = save;
                (None, 0)
            }
        };
        let span = match &unit {
            Some(u) => nspan.join(u.span),
            None => nspan,
        };
        Some((
            Expr {
                kind: ExprKind::Number { value, text, unit },
                span,
            },
            d,
        ))
    }

    /// A unit written tight (`m^3/h`, `kJ/kg`): `Some(None)` when none
    /// starts here; `None` for what is left to the pest rules (groups,
    /// non-ASCII, keywords).
    fn unit(&mut self) -> Option<Option<UNode>> {
        let Some(mut acc) = self.unit_factor()? else {
            return Some(None);
        };
        loop {
            let div = match (self.peek(), self.at(1)) {
                (Some(b'*'), _) => false,
                (Some(b'/'), Some(b'/')) => break,
                (Some(b'/'), _) => true,
                _ => break,
            };
            match self.at(1) {
                Some(c) if is_ident_start(c) || c == b'%' || c == b'(' => {}
                Some(c) if !c.is_ascii() => return None,
                _ => break,
            }
            let save = (self.pos, self.last_end);
            self.pos += 1;
            let factor = if self.peek() == Some(b'(') {
                // `(kg*K)`: a group, its inside written loose.
                let g = self.unit_group()?;
                Some(self.unit_pow(g, false)?)
            } else {
                self.unit_factor()?
            };
            let Some((rhs, rd)) = factor else {
                (self.pos, self.last_end) = save;
                break;
            };
            let (lhs, ld) = acc;
            let s = lhs.span.join(rhs.span);
            let d = self.b.check_depth(ld.max(rd) + 1, rhs.span).ok()?;
            let kind = if div {
                UnitKind::Div(Box::new(lhs), Box::new(rhs))
            } else {
                UnitKind::Mul(Box::new(lhs), Box::new(rhs))
            };
            acc = (UnitExpr { kind, span: s }, d);
        }
        Some(Some(acc))
    }

    /// The end of the unit symbol at the cursor: `Some(Some(end))` for `%`
    /// or an ASCII name, `Some(None)` when no symbol starts here, `None`
    /// when the line is not for this parser (a non-ASCII unit, a keyword).
    fn unit_symbol_end(&self) -> Option<Option<usize>> {
        let a = self.pos;
        let Some(c) = self.peek() else {
            return Some(None);
        };
        if c == b'%' {
            return Some(Some(a + 1));
        }
        if is_ident_start(c) {
            let mut z = a + 1;
            while self.bytes.get(z).copied().is_some_and(is_ident_char) {
                z += 1;
            }
            if self.bytes.get(z).is_some_and(|c| !c.is_ascii()) || is_unit_keyword(&self.text[a..z])
            {
                return None;
            }
            return Some(Some(z));
        }
        if c.is_ascii() { Some(None) } else { None }
    }

    /// A unit symbol and its power.
    fn unit_factor(&mut self) -> Option<Option<UNode>> {
        let a = self.pos;
        let Some(z) = self.unit_symbol_end()? else {
            return Some(None);
        };
        let name = self.text[a..z].to_string();
        let aspan = self.token(z - a);
        let atom = UnitExpr {
            kind: UnitKind::Atom(name),
            span: aspan,
        };
        Some(Some(self.unit_pow((atom, 0), false)?))
    }

    /// `^INT` after a unit factor (blanks before `^` allowed when
    /// `loose`), if there is one.
    fn unit_pow(&mut self, base: UNode, loose: bool) -> Option<UNode> {
        let save = self.pos;
        if loose {
            self.skip_ws();
        }
        if self.peek() == Some(b'^') {
            let mut e = self.pos + 1;
            if self.bytes.get(e) == Some(&b'-') {
                e += 1;
            }
            if self.bytes.get(e).is_some_and(u8::is_ascii_digit) {
                let mut z = e;
                while self.bytes.get(z).is_some_and(u8::is_ascii_digit) {
                    z += 1;
                }
                let n = self.text[self.pos + 1..z].parse::<i32>().ok()?;
                self.token(z - self.pos);
                let span = Span::new(base.0.span.start, self.b.base + z);
                let d = self.b.check_depth(base.1 + 1, span).ok()?;
                return Some((
                    UnitExpr {
                        kind: UnitKind::Pow(Box::new(base.0), n),
                        span,
                    },
                    d,
                ));
            }
        }
        self.pos = save;
        Some(base)
    }

    /// `( UNIT )` with the `(` next; the inside is written loose. The
    /// group's span includes its parentheses.
    fn unit_group(&mut self) -> Option<UNode> {
        self.depth += 1;
        if self.depth > INLINE_DEPTH {
            return None;
        }
        let a = self.pos;
        self.token(1);
        self.skip_ws();
        let (u, d) = self.unit_loose()?;
        self.skip_ws();
        if self.peek()? != b')' {
            return None;
        }
        self.token(1);
        self.depth -= 1;
        Some((
            UnitExpr {
                kind: u.kind,
                span: self.span(a, self.pos),
            },
            d,
        ))
    }

    /// A unit written loose (annotations, groups): blanks allowed, a blank
    /// between factors multiplies and binds tighter than `*` and `/`.
    fn unit_loose(&mut self) -> Option<UNode> {
        let mut acc = self.unit_juxt()?;
        loop {
            let save = self.pos;
            self.skip_ws();
            let div = match (self.peek(), self.at(1)) {
                (Some(b'*'), _) => false,
                (Some(b'/'), Some(b'/')) => {
                    self.pos = save;
                    break;
                }
                (Some(b'/'), _) => true,
                _ => {
                    self.pos = save;
                    break;
                }
            };
            self.pos += 1;
            self.skip_ws();
            let (rhs, rd) = self.unit_juxt()?;
            let (lhs, ld) = acc;
            let s = lhs.span.join(rhs.span);
            let d = self.b.check_depth(ld.max(rd) + 1, rhs.span).ok()?;
            let kind = if div {
                UnitKind::Div(Box::new(lhs), Box::new(rhs))
            } else {
                UnitKind::Mul(Box::new(lhs), Box::new(rhs))
            };
            acc = (UnitExpr { kind, span: s }, d);
        }
        Some(acc)
    }

    /// Unit factors side by side (multiplied).
    fn unit_juxt(&mut self) -> Option<UNode> {
        let mut acc = self.unit_loose_factor()??;
        loop {
            let save = (self.pos, self.last_end);
            self.skip_ws();
            let Some((rhs, rd)) = self.unit_loose_factor()? else {
                (self.pos, self.last_end) = save;
                break;
            };
            let (lhs, ld) = acc;
            let s = lhs.span.join(rhs.span);
            let d = self.b.check_depth(ld.max(rd) + 1, rhs.span).ok()?;
            acc = (
                UnitExpr {
                    kind: UnitKind::Mul(Box::new(lhs), Box::new(rhs)),
                    span: s,
                },
                d,
            );
        }
        Some(acc)
    }

    /// A factor of a loose unit: a symbol, `1` or a group, and its power.
    fn unit_loose_factor(&mut self) -> Option<Option<UNode>> {
        let base = match self.peek() {
            Some(b'(') => self.unit_group()?,
            Some(b'1')
                if !self
                    .at(1)
                    .is_some_and(|c| is_ident_char(c) || c == b'.' || !c.is_ascii()) =>
            {
                let span = self.token(1);
                (
                    UnitExpr {
                        kind: UnitKind::One,
                        span,
                    },
                    0,
                )
            }
            Some(b'1') if self.at(1).is_some_and(|c| !c.is_ascii()) => return None,
            _ => {
                // A symbol: its power is read loose below.
                let a = self.pos;
                let Some(z) = self.unit_symbol_end()? else {
                    return Some(None);
                };
                let name = self.text[a..z].to_string();
                let span = self.token(z - a);
                (
                    UnitExpr {
                        kind: UnitKind::Atom(name),
                        span,
                    },
                    0,
                )
            }
        };
        Some(Some(self.unit_pow(base, true)?))
    }
}
