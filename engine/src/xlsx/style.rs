//! Formats of the package: colours, number formats, row heights.

use rust_xlsxwriter::{
    Color, ConditionalFormatText, ConditionalFormatTextRule, Format, FormatAlign, FormatBorder,
};

pub(super) struct Styles {
    pub title: Format,
    pub header: Format,
    pub h2: Format,
    pub h3: Format,
    pub note: Format,
    pub input: Format,
    pub live: Format,
    pub engine: Format,
    pub wrap: Format,
    pub flag: Format,
    pub check: Format,
    pub label: Format,
    pub small: Format,
    pub unit: Format,
    pub subheader: Format,
    pub subheader_num: Format,
    pub live_center: Format,
    pub stale_cell: Format,
    pub flag_wrap: Format,
    pub label_wrap: Format,
}

pub(super) fn styles() -> Styles {
    let border = Color::RGB(0x9A_A5_B1);
    Styles {
        title: Format::new()
            .set_bold()
            .set_font_size(14)
            .set_font_color(Color::RGB(0x1D_35_57)),
        header: Format::new()
            .set_bold()
            .set_font_color(Color::White)
            .set_background_color(Color::RGB(0x1D_35_57))
            .set_border_bottom(FormatBorder::Medium),
        h2: Format::new()
            .set_bold()
            .set_font_color(Color::RGB(0x1D_35_57))
            .set_background_color(Color::RGB(0xD7_E3_EE))
            .set_border_bottom(FormatBorder::Thin),
        h3: Format::new()
            .set_bold()
            .set_italic()
            .set_font_color(Color::RGB(0x1D_35_57)),
        note: Format::new()
            .set_italic()
            .set_font_color(Color::RGB(0x4A_55_60)),
        input: Format::new()
            .set_background_color(Color::RGB(0xFF_E8_C2))
            .set_border(FormatBorder::Thin)
            .set_border_color(Color::RGB(0xC0_7A_1E))
            .set_bold()
            .set_align(FormatAlign::Top)
            .set_unlocked(),
        live: Format::new()
            .set_align(FormatAlign::Top)
            .set_border(FormatBorder::Hair)
            .set_border_color(border),
        engine: Format::new()
            .set_background_color(Color::RGB(0xE6_E0_F0))
            .set_italic()
            .set_align(FormatAlign::Top)
            .set_font_color(Color::RGB(0x3E_2F_63))
            .set_border(FormatBorder::Hair)
            .set_border_color(border),
        wrap: Format::new().set_text_wrap().set_align(FormatAlign::Top),
        flag: Format::new()
            .set_num_format(";;;@")
            .set_bold()
            .set_font_color(Color::RGB(0xB0_00_20)),
        check: Format::new()
            .set_bold()
            .set_align(FormatAlign::Center)
            .set_align(FormatAlign::Top),
        label: Format::new().set_bold().set_align(FormatAlign::Top),
        small: Format::new().set_font_color(Color::RGB(0x4A_55_60)),
        unit: Format::new().set_indent(1).set_align(FormatAlign::Top),
        subheader: Format::new()
            .set_bold()
            .set_font_color(Color::RGB(0x1D_35_57))
            .set_background_color(Color::RGB(0xEE_F2_F6))
            .set_border_bottom(FormatBorder::Thin)
            .set_text_wrap()
            .set_align(FormatAlign::Top),
        subheader_num: Format::new()
            .set_bold()
            .set_font_color(Color::RGB(0x1D_35_57))
            .set_background_color(Color::RGB(0xEE_F2_F6))
            .set_border_bottom(FormatBorder::Thin)
            .set_align(FormatAlign::Right),
        live_center: Format::new().set_align(FormatAlign::Center),
        stale_cell: Format::new()
            .set_font_color(Color::White)
            .set_background_color(Color::RGB(0xB0_00_20)),
        flag_wrap: Format::new()
            .set_text_wrap()
            .set_align(FormatAlign::Top)
            .set_font_color(Color::RGB(0xB0_00_20)),
        label_wrap: Format::new()
            .set_bold()
            .set_text_wrap()
            .set_align(FormatAlign::Top),
    }
}

/// A failed check turns red when a spreadsheet recomputes it.
pub(super) fn fail_highlight() -> ConditionalFormatText {
    ConditionalFormatText::new()
        .set_rule(ConditionalFormatTextRule::BeginsWith("FAIL".to_string()))
        .set_format(
            Format::new()
                .set_bold()
                .set_font_color(Color::White)
                .set_background_color(Color::RGB(0xB0_00_20)),
        )
}

/// Number format showing about four significant figures of `v` (the
/// shown value of a computed row; the SI cell keeps full precision).
pub(super) fn sig_format(v: f64) -> String {
    let a = v.abs();
    if a == 0.0 {
        return "0".into();
    }
    if !(1e-3..1e6).contains(&a) {
        return "0.000E+00".into();
    }
    let decimals = (3 - a.log10().floor() as i32).clamp(0, 6) as usize;
    if decimals == 0 {
        "0".into()
    } else {
        format!("0.{}", "0".repeat(decimals))
    }
}

/// Number format showing `sig` significant figures of `v` (SI cells:
/// the cell keeps full precision, the format keeps the page readable).
pub(super) fn sig_format_n(v: f64, sig: i32) -> String {
    let a = v.abs();
    if a == 0.0 || !a.is_finite() {
        return "0".into();
    }
    if !(1e-3..1e7).contains(&a) {
        return format!("0.{}E+00", "0".repeat((sig - 1).max(1) as usize));
    }
    let decimals = (sig - 1 - a.log10().floor() as i32).clamp(0, 9) as usize;
    if decimals == 0 {
        "0".into()
    } else {
        format!("0.{}", "0".repeat(decimals))
    }
}

/// Row height (points) that shows `text` wrapped in a cell `width`
/// characters wide (11 pt Calibri: about 15 pt a line; a character of
/// the column width holds about 1.1 characters of ordinary text).
pub(super) fn fit_height(text: &str, width: f64) -> f64 {
    let per_line = (width * 1.1).max(4.0);
    let lines: f64 = text
        .split('\n')
        .map(|l| {
            // Word wrap: count words onto lines.
            let mut n = 1.0;
            let mut used = 0.0;
            for w in l.split(' ') {
                let len = w.chars().count() as f64;
                if used > 0.0 && used + 1.0 + len > per_line {
                    n += 1.0;
                    used = len;
                } else {
                    used += if used > 0.0 { 1.0 + len } else { len };
                }
                while used > per_line {
                    n += 1.0;
                    used -= per_line;
                }
            }
            n
        })
        .sum();
    15.0 * lines.max(1.0)
}

/// Page setup shared by every sheet: A4, fit to one page wide, narrow
/// margins, the sheet name and page number in the footer.
pub(super) fn page_setup(ws: &mut rust_xlsxwriter::Worksheet, landscape: bool) {
    ws.set_paper_size(9);
    if landscape {
        ws.set_landscape();
    } else {
        ws.set_portrait();
    }
    ws.set_print_fit_to_pages(1, 0);
    ws.set_margins(0.5, 0.5, 0.6, 0.6, 0.3, 0.3);
    ws.set_footer("&L&F&C&A&RPage &P of &N");
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn heights_grow_with_wrapped_text() {
        assert_eq!(fit_height("short", 30.0), 15.0);
        let long = "word ".repeat(40);
        assert!(
            fit_height(&long, 30.0) >= 75.0,
            "{}",
            fit_height(&long, 30.0)
        );
        assert_eq!(fit_height("a\nb", 30.0), 30.0);
    }

    #[test]
    fn si_formats_keep_the_page_readable() {
        assert_eq!(sig_format_n(683.15, 7), "0.0000");
        assert_eq!(sig_format_n(4_200_000.0, 7), "0");
        assert_eq!(sig_format_n(1.5e-5, 7), "0.000000E+00");
    }
}
