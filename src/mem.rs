//! Large buffers: an empty `Vec` with room for `n` values whose pages the
//! kernel is asked to back with 2 MiB huge pages (Linux; elsewhere an
//! ordinary `Vec`). A gigabyte result or a 200 MB file read into 4 KiB
//! pages costs one page fault per page, about as much as the work on it:
//! measured on the 2-core build machine, reading a 203 MB file into a fresh
//! buffer took 0.21 s, into one advised so 0.11–0.13 s.
//!
//! Only the advice is given: the memory, its contents and its length are
//! those of `Vec::with_capacity` (or of `vec![0u8; n]` for a zeroed buffer
//! to read a file into).

/// Buffers smaller than this are left to ordinary pages.
#[cfg(target_os = "linux")]
const MIN_BYTES: usize = 8 << 20;

/// An empty buffer with room for `n` values, backed by huge pages where the
/// kernel allows (Linux's transparent huge pages in "madvise" or "always"
/// mode). Public for the coupling benchmark, whose measure of the machine's
/// limit writes into the same kind of buffer as the coupling's result.
pub fn large_vec<T>(n: usize) -> Vec<T> {
    let mut v: Vec<T> = Vec::with_capacity(n);
    advise_huge(
        v.as_mut_ptr() as usize,
        n.saturating_mul(std::mem::size_of::<T>()),
    );
    v
}

/// `n` zero bytes, backed by huge pages where the kernel allows. A large
/// zeroed allocation is fresh memory that reads as zero untouched (the
/// allocator asks the kernel for it; nothing is written), so the buffer
/// costs no more than [`large_vec`]'s until it is written, and can be read
/// into as a slice (by two threads, [`crate::io::disk`], Unix).
#[cfg(unix)]
pub(crate) fn large_zeroed_bytes(n: usize) -> Vec<u8> {
    let mut v = vec![0u8; n];
    advise_huge(v.as_mut_ptr() as usize, n);
    v
}

/// Ask for huge pages over the whole 2 MiB pages of the `bytes` from
/// `start`, an allocation just made and not yet written (Linux, from
/// [`MIN_BYTES`] on; nothing elsewhere).
#[cfg_attr(not(target_os = "linux"), allow(unused_variables))]
fn advise_huge(start: usize, bytes: usize) {
    #[cfg(target_os = "linux")]
    {
        const HUGE: usize = 2 << 20;
        if bytes >= MIN_BYTES {
            let first = start.div_ceil(HUGE) * HUGE;
            let end = start.saturating_add(bytes) / HUGE * HUGE;
            if end > first {
                // SAFETY: [first, end) lies inside the allocation just made and
                // not yet written; MADV_HUGEPAGE only changes how it is backed.
                unsafe {
                    libc::madvise(first as *mut libc::c_void, end - first, libc::MADV_HUGEPAGE);
                }
            }
        }
    }
}

#[cfg(test)]
mod tests {
    #[test]
    fn a_large_vec_is_an_empty_vec_with_the_room_asked() {
        let v: Vec<f64> = super::large_vec(3 << 20);
        assert!(v.is_empty() && v.capacity() >= 3 << 20);
        let w: Vec<u8> = super::large_vec(10);
        assert!(w.is_empty() && w.capacity() >= 10);
    }

    #[cfg(unix)]
    #[test]
    fn large_zeroed_bytes_are_zero() {
        for n in [0, 10, 9 << 20] {
            let v = super::large_zeroed_bytes(n);
            assert_eq!(v.len(), n);
            assert!(v.iter().all(|&b| b == 0));
        }
    }
}
