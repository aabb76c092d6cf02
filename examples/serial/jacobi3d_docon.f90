! 3-D Poisson problem, 7-point Jacobi iteration, with Fortran DO CONCURRENT (host parallel when the
! compiler parallelises it, e.g. gfortran -ftree-parallelize-loops=N; serial otherwise).
!
! The same invented model as jacobi3d_serial.c: a cube of conducting material, 1 m on a side, with
! a heating element in a box at its centre; the bottom face (k = 0) is held at temperature 1 and
! the other five faces at 0. Each iteration replaces every interior value by the mean of its six
! neighbours plus h^2 f / 6 (a DO CONCURRENT over the interior), then copies the new iterate back
! (another DO CONCURRENT). The arrays are indexed from 0, like the C version, and the arithmetic
! is the C version's in the same order, so the two print the same values. All data are invented.
!
! Sizes are the parameters nx, ny, nz and niter on one line of the program below; the file is
! plain .f90 without a preprocessor, so to change them, edit that line.
! Build: gfortran -O2 -Wall jacobi3d_docon.f90 -o jacobi3d_docon
! Small: sed 's/nx = 128, ny = 128, nz = 128, niter = 500/nx = 32, ny = 32, nz = 32, niter = 100/' \
!          jacobi3d_docon.f90 > jacobi3d_small.f90
program jacobi3d_docon
  implicit none
  integer, parameter :: dp = kind(1.0d0)
  integer, parameter :: nx = 128, ny = 128, nz = 128, niter = 500
  real(dp), parameter :: sixth = 1.0_dp / 6.0_dp
  real(dp), allocatable :: u(:, :, :), unew(:, :, :), f(:, :, :)
  real(dp) :: h, h2, r, r2, total
  integer :: i, j, k, iter
  logical :: inside

  allocate(u(0:nx-1, 0:ny-1, 0:nz-1), unew(0:nx-1, 0:ny-1, 0:nz-1), f(0:nx-1, 0:ny-1, 0:nz-1))
  h = 1.0_dp / real(nx - 1, dp)
  h2 = h * h

  ! The heating element fills the middle quarter of each direction; the bottom face is held at 1.
  do k = 0, nz - 1
    do j = 0, ny - 1
      do i = 0, nx - 1
        inside = i >= 3 * nx / 8 .and. i < 5 * nx / 8 .and. &
                 j >= 3 * ny / 8 .and. j < 5 * ny / 8 .and. &
                 k >= 3 * nz / 8 .and. k < 5 * nz / 8
        f(i, j, k) = merge(100.0_dp, 0.0_dp, inside)
        u(i, j, k) = merge(1.0_dp, 0.0_dp, k == 0)
        unew(i, j, k) = u(i, j, k)
      end do
    end do
  end do

  do iter = 1, niter
    do concurrent (k = 1:nz-2, j = 1:ny-2, i = 1:nx-2)
      unew(i, j, k) = sixth * (u(i-1, j, k) + u(i+1, j, k) + u(i, j-1, k) + u(i, j+1, k) + &
                               u(i, j, k-1) + u(i, j, k+1) + h2 * f(i, j, k))
    end do
    do concurrent (k = 1:nz-2, j = 1:ny-2, i = 1:nx-2)
      u(i, j, k) = unew(i, j, k)
    end do
  end do

  ! Residual and sums in a fixed order (k, j, i), so they are reproducible.
  r2 = 0.0_dp
  do k = 1, nz - 2
    do j = 1, ny - 2
      do i = 1, nx - 2
        r = f(i, j, k) + (u(i-1, j, k) + u(i+1, j, k) + u(i, j-1, k) + u(i, j+1, k) + &
                          u(i, j, k-1) + u(i, j, k+1) - 6.0_dp * u(i, j, k)) / h2
        r2 = r2 + r * r
      end do
    end do
  end do
  total = 0.0_dp
  do k = 0, nz - 1
    do j = 0, ny - 1
      do i = 0, nx - 1
        total = total + u(i, j, k)
      end do
    end do
  end do

  print '(a, i0)', 'iterations ', niter
  print '(a, es17.10)', 'residual  ', sqrt(r2)
  print '(a, es17.10)', 'checksum  ', total
  print '(a, es17.10)', 'center    ', u(nx / 2, ny / 2, nz / 2)
  deallocate(u, unew, f)
end program jacobi3d_docon
