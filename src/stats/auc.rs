//! Area under the ROC curve.

/// Mann–Whitney AUC: the probability that a random positive scores above a
/// random negative, ties counted ½ (Hanley & McNeil 1982, eq. 1; Mann &
/// Whitney 1947). O(N log N) by sorting and mid-ranks. `None` when either
/// class is empty.
#[must_use]
pub fn auc_from_scores(scores: &[f64], positive: &[bool]) -> Option<f64> {
    let n_pos = positive.iter().filter(|&&p| p).count();
    let n_neg = positive.len() - n_pos;
    if n_pos == 0 || n_neg == 0 {
        return None;
    }
    let mut order: Vec<usize> = (0..scores.len()).collect();
    order.sort_unstable_by(|&a, &b| scores[a].total_cmp(&scores[b]));
    let mut rank_sum_pos = 0.0;
    let mut start = 0;
    while start < order.len() {
        let mut end = start + 1;
        while end < order.len() && scores[order[end]] == scores[order[start]] {
            end += 1;
        }
        let mid_rank = (start + end + 1) as f64 / 2.0;
        let tied_pos = order[start..end].iter().filter(|&&r| positive[r]).count();
        rank_sum_pos += mid_rank * tied_pos as f64;
        start = end;
    }
    let u = rank_sum_pos - (n_pos * (n_pos + 1)) as f64 / 2.0;
    Some(u / (n_pos as f64 * n_neg as f64))
}
