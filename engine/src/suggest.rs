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

/// Suggestions among a fixed set of names (a worksheet's), indexed once
/// on first use: candidates by length, each length sorted, so a query
/// costs O([`MAX_COMPARED`] + log n) whatever the number n of names.
pub(crate) struct Suggester<'a> {
    names: Vec<&'a str>,
    by_len: std::cell::OnceCell<Vec<Vec<&'a str>>>,
}

impl<'a> Suggester<'a> {
    pub(crate) fn new(names: impl Iterator<Item = &'a str>) -> Suggester<'a> {
        Suggester {
            names: names.collect(),
            by_len: std::cell::OnceCell::new(),
        }
    }

    /// The name most similar to `word`, if similar enough.
    pub(crate) fn closest(&self, word: &str) -> Option<&'a str> {
        self.closest_counted(word).0
    }

    fn closest_counted(&self, word: &str) -> (Option<&'a str>, usize) {
        let by_len = self.by_len.get_or_init(|| {
            let longest = self.names.iter().map(|n| n.len()).max().unwrap_or(0);
            let mut v: Vec<Vec<&'a str>> = vec![Vec::new(); longest + 1];
            for n in &self.names {
                v[n.len()].push(n);
            }
            for b in &mut v {
                b.sort_unstable();
                b.dedup();
            }
            v
        });
        let window = (word.len() / 3).max(2);
        // Each nearby length gets an equal share of the comparisons, spent
        // on its names alphabetically nearest to the word (a typo rarely
        // changes the start of a name).
        let share = MAX_COMPARED / (2 * window + 1);
        let mut best = Best::default();
        let lo = word.len().saturating_sub(window);
        for l in lo..=word.len() + window {
            let Some(bucket) = by_len.get(l) else {
                continue;
            };
            let pos = bucket.partition_point(|c| *c < word);
            let (mut below, mut above) = (pos, pos);
            for k in 0..share.min(bucket.len()) {
                let c = if (k % 2 == 0 && above < bucket.len()) || below == 0 {
                    above += 1;
                    bucket[above - 1]
                } else {
                    below -= 1;
                    bucket[below]
                };
                best.offer(word, c);
            }
        }
        (best.found.map(|(_, c)| c), best.compared)
    }
}

/// The best candidate so far.
#[derive(Default)]
struct Best<'a> {
    found: Option<(f64, &'a str)>,
    compared: usize,
}

impl<'a> Best<'a> {
    fn offer(&mut self, word: &str, c: &'a str) {
        self.compared += 1;
        let s = strsim::jaro_winkler(word, c);
        if s <= THRESHOLD {
            return;
        }
        let better = match self.found {
            None => true,
            Some((bs, bc)) => s > bs || (s == bs && c < bc),
        };
        if better {
            self.found = Some((s, c));
        }
    }
}

/// The candidate most similar to `word`, if similar enough (one-off
/// queries over small lists: fields, parameters, functions).
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
    let mut best = Best::default();
    for mut bucket in buckets {
        let room = MAX_COMPARED - best.compared;
        if room == 0 {
            break;
        }
        if bucket.len() > room {
            // The `room` alphabetically first, whatever the input order.
            bucket.select_nth_unstable(room);
            bucket.truncate(room);
        }
        for c in bucket {
            best.offer(word, c);
        }
    }
    (best.found.map(|(_, c)| c), best.compared)
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
    }

    #[test]
    fn indexed_suggester_agrees_and_is_bounded() {
        let names: Vec<String> = (0..20_000).map(|i| format!("value_{i:05}")).collect();
        let s = Suggester::new(names.iter().map(String::as_str));
        // Queries against 20 000 names (20 000 of them were 4e8
        // comparisons): each compares at most MAX_COMPARED.
        for i in (0..20_000).step_by(10) {
            let (_, n) = s.closest_counted(&format!("unknown_{i:05}"));
            assert!(n <= MAX_COMPARED, "{n}");
        }
        let small = Suggester::new(["p_suction", "p_discharge", "T_in", "m_dot"].into_iter());
        assert_eq!(small.closest("p_sucton"), Some("p_suction"));
        assert_eq!(small.closest("m_dt"), Some("m_dot"));
        assert_eq!(small.closest("zzzz"), None);
        let rev = Suggester::new(names.iter().rev().map(String::as_str));
        assert_eq!(s.closest("value_1234x"), rev.closest("value_1234x"));
        // Among 20 000 names the near one is still found.
        assert_eq!(s.closest("value_12345x"), Some("value_12345"));
    }
}
