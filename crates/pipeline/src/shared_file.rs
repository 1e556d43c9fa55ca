//! The output file shared by the ranks of an MPI job, opened for collective writing.
//!
//! The `netcdf` crate (0.12) creates a file for parallel writing but opens an existing one
//! for parallel access read-only (its handle's id is private). To continue an interrupted
//! run's partial output on several ranks, this module opens it with netCDF-C's
//! `nc_open_par` and hands the open file on as a [`netcdf::FileMut`], so every later write
//! goes through the same code as a new output's. Every `unsafe` of the feature stays here.

use crate::error::nc;
use crate::start::damaged_partial;
use crate::PipelineError;
use mpi::topology::SimpleCommunicator;
use mpi::traits::AsRaw;
use netcdf_sys::par::nc_open_par;
use netcdf_sys::{libnetcdf_lock, nc_type, NC_NOERR, NC_WRITE};
use std::ffi::CString;
use std::os::unix::ffi::OsStrExt;
use std::path::Path;

/// Opens the netCDF-4 file at `path` for writing on every rank of `world` (a collective
/// call: every rank must make it), with every variable written collectively.
pub(crate) fn open_for_collective_writing(
    path: &Path,
    world: &SimpleCommunicator,
) -> Result<netcdf::FileMut, PipelineError> {
    let c_path = CString::new(path.as_os_str().as_bytes()).map_err(|_| PipelineError::Output {
        path: path.to_path_buf(),
        message: "the path holds a NUL byte, which netCDF-C cannot be given".into(),
    })?;
    let mut ncid: nc_type = -1;
    let status = {
        let _serial = libnetcdf_lock.lock();
        // SAFETY: a NUL-terminated path that outlives the call, this job's communicator, the
        // null MPI_Info, and a place for the id; netCDF-C keeps none of the pointers.
        unsafe {
            nc_open_par(
                c_path.as_ptr(),
                // netCDF-C 4.9 chooses MPI-IO itself (NC_MPIIO is deprecated and ignored).
                NC_WRITE,
                world.as_raw(),
                mpi::ffi::RSMPI_INFO_NULL,
                &mut ncid,
            )
        }
    };
    if status != NC_NOERR {
        let cause = netcdf::Error::Netcdf(status);
        return Err(damaged_partial(
            path,
            format!("cannot be opened for writing by every rank ({cause})"),
        ));
    }
    let file = owned_file(ncid);
    write_collectively(&file, path)?;
    Ok(file)
}

/// Sets every variable of `file` (open for parallel writing) to collective access
/// (`nc_var_par_access` with `NC_COLLECTIVE`), as the ranks' writes need.
pub(crate) fn write_collectively(file: &netcdf::FileMut, path: &Path) -> Result<(), PipelineError> {
    for variable in file.variables() {
        nc(variable.access_collective(), path, || {
            format!("setting collective access to '{}'", variable.name())
        })?;
    }
    Ok(())
}

/// A `netcdf::FileMut` owning the open netCDF id `ncid`: it closes it when closed or dropped.
fn owned_file(ncid: nc_type) -> netcdf::FileMut {
    // SAFETY: in netcdf 0.12.1 (Cargo.lock), `FileMut` is `#[repr(transparent)]` over `File`,
    // itself `#[repr(transparent)]` over a private `RawFile` holding only the file's `nc_type`
    // id; `transmute` refuses a type of another size. `ncid` is open and owned by nothing
    // else, which is all that `RawFile` assumes of it.
    unsafe { std::mem::transmute::<nc_type, netcdf::FileMut>(ncid) }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A file opened through netCDF-C and handed to `owned_file` is written and closed by the
    /// `netcdf` crate as one of its own (no MPI needed: a serial open).
    #[test]
    fn an_owned_id_is_written_and_closed_by_the_netcdf_crate() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("owned.nc");
        let mut created = netcdf::create(&path).unwrap();
        created.add_dimension("x", 3).unwrap();
        created.add_variable::<f32>("v", &["x"]).unwrap();
        created.close().unwrap();

        let c_path = CString::new(path.as_os_str().as_bytes()).unwrap();
        let mut ncid: nc_type = -1;
        // SAFETY: as in `open_for_collective_writing`, serial.
        let status = unsafe { netcdf_sys::nc_open(c_path.as_ptr(), NC_WRITE, &mut ncid) };
        assert_eq!(status, NC_NOERR);
        let mut file = owned_file(ncid);
        file.variable_mut("v")
            .unwrap()
            .put_values(&[1.5f32, 2.5, 3.5], ..)
            .unwrap();
        file.add_attribute("history", "written through an owned id")
            .unwrap();
        file.close().unwrap();

        let read = netcdf::open(&path).unwrap();
        let values = read
            .variable("v")
            .unwrap()
            .get_values::<f32, _>(..)
            .unwrap();
        assert_eq!(values, [1.5, 2.5, 3.5]);
        assert!(read.attribute("history").is_some());
    }
}
