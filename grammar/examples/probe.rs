fn main() {
    let src = std::env::args().nth(1).unwrap_or_default();
    let mode = std::env::args().nth(2).unwrap_or_default();
    match mode.as_str() {
        "e" => println!("{:#?}", sheaf_grammar::parse_expr(&src)),
        "u" => println!("{:#?}", sheaf_grammar::parse_unit(&src)),
        _ => match sheaf_grammar::parse(&src) {
            Ok(w) => println!("{:#?}", w),
            Err(es) => {
                for e in es {
                    let (l, c) = sheaf_grammar::line_col(&src, e.span.start);
                    println!("{l}:{c} {:?} {}", e.span, e.message)
                }
            }
        },
    }
}
