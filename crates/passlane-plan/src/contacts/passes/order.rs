//! The order passes are listed in, applied without a second list.

use super::Pass;

/// Sorts passes by AOS, then station, then satellite (stable), in place:
/// the order is found on a list of indices (a pass is a few hundred bytes,
/// and moving them in a stable sort cost 3 % of a week's search, callgrind)
/// and then applied by swaps along its cycles, so no second list of passes
/// is made (building one was a third of the `passes` command's page faults:
/// 12 satellites × 3 stations × 7 days, `perf record -e page-faults`).
pub(super) fn sort_passes(passes: &mut [Pass]) {
    let mut order: Vec<usize> = (0..passes.len()).collect();
    order.sort_by(|&i, &j| {
        let (a, b) = (&passes[i], &passes[j]);
        a.aos
            .s_since_j2000()
            .total_cmp(&b.aos.s_since_j2000())
            .then_with(|| a.station.cmp(&b.station))
            .then_with(|| a.station_index.cmp(&b.station_index))
            .then_with(|| a.catalog_number.cmp(&b.catalog_number))
    });
    permute(passes, order);
}

/// Rearranges `items` so that position k holds what was at `order[k]`
/// (`order` a permutation of the positions). Each cycle of the permutation
/// is followed with swaps: position k takes its item, and the position the
/// item came from, which now holds the cycle's first item, is next; a
/// position done is marked by pointing it at itself.
fn permute<T>(items: &mut [T], mut order: Vec<usize>) {
    debug_assert_eq!(items.len(), order.len());
    for start in 0..order.len() {
        let mut k = start;
        while order[k] != start {
            let from = order[k];
            items.swap(k, from);
            order[k] = k;
            k = from;
        }
        order[k] = k;
    }
}

#[cfg(test)]
mod tests {
    use super::permute;

    #[test]
    fn a_permutation_is_applied_as_given() {
        // Every permutation of 5 items, and a long one with cycles of many
        // lengths, against building the rearranged list directly.
        fn check(order: Vec<usize>) {
            let items: Vec<u32> = (0..order.len() as u32).map(|i| 100 + i).collect();
            let expected: Vec<u32> = order.iter().map(|&i| items[i]).collect();
            let mut got = items.clone();
            permute(&mut got, order);
            assert_eq!(got, expected);
        }
        fn all(prefix: &mut Vec<usize>, n: usize) {
            if prefix.len() == n {
                check(prefix.clone());
                return;
            }
            for i in 0..n {
                if !prefix.contains(&i) {
                    prefix.push(i);
                    all(prefix, n);
                    prefix.pop();
                }
            }
        }
        for n in 0..=5 {
            all(&mut Vec::new(), n);
        }
        // A fixed pseudo-random shuffle of 1,000 (Fisher–Yates on a linear
        // congruential sequence).
        let mut order: Vec<usize> = (0..1000).collect();
        let mut x: u64 = 12345;
        for i in (1..order.len()).rev() {
            x = x
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            order.swap(i, (x >> 33) as usize % (i + 1));
        }
        check(order);
    }
}
