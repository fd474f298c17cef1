//! "Did you mean" suggestions with bounded work: a query looks only at
//! candidates of similar length (a typo changes the length by a little)
//! and compares at most [`MAX_COMPARED`] of them, nearest lengths first,
//! so a worksheet with thousands of unknown names stays fast (it was
//! quadratic: every unknown name compared with every name). The result
//! does not depend on the order the candidates come in.

/// Most candidates compared (Jaro–Winkler) per query.
pub const MAX_COMPARED: usize = 256;

/// Lowest Jaro–Winkler similarity that is still suggested.
const THRESHOLD: f64 = 0.8;

/// The candidate most similar to `word`, if similar enough.
pub(crate) fn closest<'a>(
    word: &str,
    candidates: impl Iterator<Item = &'a str>,
) -> Option<&'a str> {
    closest_counted(word, candidates).0
}

/// [`closest`], and how many candidates were compared.
fn closest_counted<'a>(
    word: &str,
    candidates: impl Iterator<Item = &'a str>,
) -> (Option<&'a str>, usize) {
    let window = (word.len() / 3).max(2);
    let mut buckets: Vec<Vec<&'a str>> = vec![Vec::new(); window + 1];
    for c in candidates {
        let d = c.len().abs_diff(word.len());
        if let Some(b) = buckets.get_mut(d) {
            b.push(c);
        }
    }
    let mut best: Option<(f64, &'a str)> = None;
    let mut compared = 0;
    for mut bucket in buckets {
        let room = MAX_COMPARED - compared;
        if room == 0 {
            break;
        }
        if bucket.len() > room {
            // The `room` alphabetically first, whatever the input order.
            bucket.select_nth_unstable(room);
            bucket.truncate(room);
        }
        for c in bucket {
            compared += 1;
            let s = strsim::jaro_winkler(word, c);
            if s <= THRESHOLD {
                continue;
            }
            let better = match best {
                None => true,
                Some((bs, bc)) => s > bs || (s == bs && c < bc),
            };
            if better {
                best = Some((s, c));
            }
        }
    }
    (best.map(|(_, c)| c), compared)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn suggests_the_near_name() {
        let names = ["p_suction", "p_discharge", "T_in", "m_dot"];
        assert_eq!(
            closest("p_sucton", names.iter().copied()),
            Some("p_suction")
        );
        assert_eq!(closest("m_dt", names.iter().copied()), Some("m_dot"));
        assert_eq!(closest("zzzz", names.iter().copied()), None);
    }

    #[test]
    fn work_is_bounded_and_order_does_not_matter() {
        // 20 000 names of the same length as the query: at most
        // MAX_COMPARED comparisons per query.
        let names: Vec<String> = (0..20_000).map(|i| format!("v{i:05}")).collect();
        let (found, n) = closest_counted("v1234x", names.iter().map(String::as_str));
        assert!(n <= MAX_COMPARED, "{n}");
        let (again, _) = closest_counted("v1234x", names.iter().rev().map(String::as_str));
        assert_eq!(found, again, "same answer whatever the order");
        // Many queries against many names finish (a hang guard only: this
        // was 20 000 x 20 000 comparisons).
        for q in names.iter().take(100) {
            let (_, n) = closest_counted(&format!("{q}_"), names.iter().map(String::as_str));
            assert!(n <= MAX_COMPARED);
        }
    }
}
