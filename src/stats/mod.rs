//! Pure estimators of leakage: contingency tables, information measures, AUC
//! with DeLong intervals, balanced error rate, bootstrap. No files, no terminal.

pub mod auc;
