//! The coverage map written by `fit --coverage-csv`, read back for a report.

use crate::csv_input::CsvIn;
use crate::error::SimError;
use crate::fit::CellReport;

/// The columns of a coverage file, as `fit::coverage_csv` writes them.
const COLUMNS: [&str; 7] = [
    "temperature_C",
    "slip_speed_rad_s",
    "coverage",
    "reached",
    "prior_mu",
    "fitted_mu",
    "std_error",
];

/// The entries of a coverage file, with their table row (temperature) and column (slip speed)
/// numbered in the order the breakpoints first appear; and the table's size (rows, columns).
///
/// # Errors
/// I/O errors; located data errors (missing column, bad cell, an incomplete table).
pub fn read(path: &str) -> Result<(Vec<CellReport>, usize, usize), SimError> {
    let mut csv = CsvIn::open(path)?;
    let mut col = [0usize; 7];
    for (c, name) in col.iter_mut().zip(COLUMNS) {
        *c = csv.column(name).ok_or_else(|| {
            csv.header_error(
                None,
                format!("missing column '{name}': not a coverage file written by `clampwise fit --coverage-csv`?"),
            )
        })?;
    }
    let [ct, cv, cc, cr, cp, cf, ce] = col;
    let (mut temps, mut speeds): (Vec<f64>, Vec<f64>) = (Vec::new(), Vec::new());
    let mut cells = Vec::new();
    while let Some(row) = csv.next_row()? {
        let t = row.required_f64(ct)?;
        let v = row.required_f64(cv)?;
        let reached = match row.text(cr).trim() {
            "1" => true,
            "0" => false,
            other => {
                return Err(row
                    .error(cr, format!("reached must be 0 or 1, got '{other}'"))
                    .into());
            }
        };
        // Breakpoints are the same decimal text on every row of one file: exact comparison.
        #[allow(clippy::float_cmp)]
        let i = temps.iter().position(|&x| x == t).unwrap_or_else(|| {
            temps.push(t);
            temps.len() - 1
        });
        #[allow(clippy::float_cmp)]
        let j = speeds.iter().position(|&x| x == v).unwrap_or_else(|| {
            speeds.push(v);
            speeds.len() - 1
        });
        cells.push(CellReport {
            i,
            j,
            temperature_c: t,
            slip_speed_rad_s: v,
            coverage: row.required_f64(cc)?,
            reached,
            prior: row.required_f64(cp)?,
            fitted: row.required_f64(cf)?,
            std_error: row.f64(ce)?,
        });
    }
    let (nt, nv) = (temps.len(), speeds.len());
    if cells.is_empty() || cells.len() != nt * nv {
        return Err(csv
            .header_error(
                None,
                format!(
                    "{} entries for {nt} temperatures × {nv} slip speeds: not a whole table",
                    cells.len()
                ),
            )
            .into());
    }
    Ok((cells, nt, nv))
}

#[cfg(test)]
mod tests {
    #![allow(clippy::indexing_slicing, clippy::unwrap_used, clippy::float_cmp)]
    use super::*;

    fn write(name: &str, text: &str) -> String {
        let dir = std::env::temp_dir().join(format!("cw-cov-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        let p = dir.join(name);
        std::fs::write(&p, text).unwrap();
        p.display().to_string()
    }

    #[test]
    fn reads_what_fit_writes() {
        let p = write(
            "ok.csv",
            "temperature_C,slip_speed_rad_s,coverage,reached,prior_mu,fitted_mu,std_error\n\
             20,0,10,0,0.4,0.4,\n20,5,900,1,0.4,0.38,0.001\n\
             200,0,0,0,0.35,0.35,\n200,5,300,1,0.35,0.33,0.002\n",
        );
        let (cells, nt, nv) = read(&p).unwrap();
        assert_eq!((nt, nv), (2, 2));
        assert_eq!((cells[3].i, cells[3].j), (1, 1));
        assert!(!cells[0].reached && cells[1].reached);
        assert_eq!(cells[1].std_error, Some(0.001));
    }

    #[test]
    fn a_bad_cell_is_located() {
        let p = write(
            "bad.csv",
            "temperature_C,slip_speed_rad_s,coverage,reached,prior_mu,fitted_mu,std_error\n\
             20,0,10,maybe,0.4,0.4,\n",
        );
        let e = read(&p).unwrap_err().to_string();
        assert!(e.contains("line 2") && e.contains("column 4"), "{e}");
    }
}
