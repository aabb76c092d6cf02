! Tidal estuary, serial (no offload directives): the starting point of a port of examples/estuary.
!
! The same invented 2-D linear shallow-water model as examples/estuary: a rectangular basin with
! closed side walls, the sea at its northern end (row ny) and a river at its southern end (row 1).
! Every step the river row is set from the river stage, the tide is imposed on the sea row, and a
! forward-backward step advances the velocities and the surface elevation in double precision. A
! tide gauge in the middle of the basin records the elevation every step; every 100 steps the
! program prints a checksum of a snapshot of h. The arithmetic is the ports' arithmetic in the same
! order, so the output equals theirs line by line. All data are invented.
!
! Sizes are the parameters nx, ny and nsteps on one line of the module below; the file is plain
! .f90 without a preprocessor, so to change them, edit that line.
! Build: gfortran -O2 -Wall estuary_serial.f90 -o estuary_serial
! Small: sed 's/nx = 800, ny = 300, nsteps = 2000/nx = 40, ny = 30, nsteps = 300/' \
!          estuary_serial.f90 > estuary_small.f90
module estuary_serial_setup
  implicit none
  integer, parameter :: dp = kind(1.0d0)
  integer, parameter :: nx = 800, ny = 300, nsteps = 2000
  ! The tide gauge sits in the middle of the basin.
  integer, parameter :: ig = nx / 2, jg = ny / 2
  real(dp), parameter :: g = 9.81_dp, depth = 10.0_dp
  real(dp), parameter :: dx = 100.0_dp, dy = 100.0_dp, dt = 2.0_dp
  real(dp), parameter :: friction = 1.0e-3_dp
  real(dp), parameter :: tide_amp = 1.0_dp, tide_period = 44712.0_dp
  real(dp), parameter :: pi = 3.141592653589793_dp
contains
  ! The river stage rises smoothly from zero so that the model starts at rest.
  pure function river_level(t) result(level)
    integer, intent(in) :: t
    real(dp) :: level
    level = 0.4_dp * (1.0_dp - exp(-real(t, dp) * dt / 900.0_dp))
  end function river_level

  ! The tide is a single harmonic on the sea row; it arrives slightly earlier on the eastern side
  ! of the mouth, which drives a cross-basin flow.
  subroutine tide(h, nx, ny, t, dt)
    integer, intent(in) :: nx, ny, t
    real(dp), intent(in) :: dt
    real(dp), intent(inout) :: h(nx, ny)
    integer :: i
    real(dp) :: phase
    phase = 2.0_dp * pi * real(t, dp) * dt / tide_period
    do i = 1, nx
      h(i, ny) = tide_amp * sin(phase + 0.5_dp * real(i, dp) / real(nx, dp))
    end do
  end subroutine tide

  ! One forward-backward step: velocities from the old elevation, then the elevation from the new
  ! velocities, then the new fields become the current ones. Clamped neighbour indices close the
  ! walls without branches.
  subroutine step(h, u, v, hn, un, vn, nx, ny, dt)
    integer, intent(in) :: nx, ny
    real(dp), intent(in) :: dt
    real(dp), intent(inout) :: h(nx, ny), u(nx, ny), v(nx, ny)
    real(dp), intent(inout) :: hn(nx, ny), un(nx, ny), vn(nx, ny)
    integer :: i, j
    real(dp) :: uw, vs

    do j = 1, ny
      do i = 1, nx
        un(i, j) = (u(i, j) - dt * g / dx * (h(min(i + 1, nx), j) - h(i, j))) &
                   / (1.0_dp + dt * friction)
        vn(i, j) = (v(i, j) - dt * g / dy * (h(i, min(j + 1, ny)) - h(i, j))) &
                   / (1.0_dp + dt * friction)
      end do
    end do

    do j = 1, ny
      do i = 1, nx
        uw = merge(un(max(i - 1, 1), j), 0.0_dp, i > 1)
        vs = merge(vn(i, max(j - 1, 1)), 0.0_dp, j > 1)
        hn(i, j) = h(i, j) - dt * depth * ((un(i, j) - uw) / dx + (vn(i, j) - vs) / dy)
      end do
    end do

    do j = 1, ny
      do i = 1, nx
        h(i, j) = hn(i, j)
        u(i, j) = un(i, j)
        v(i, j) = vn(i, j)
      end do
    end do
  end subroutine step
end module estuary_serial_setup

program estuary_serial
  use estuary_serial_setup
  implicit none
  real(dp), allocatable :: h(:, :), u(:, :), v(:, :), hn(:, :), un(:, :), vn(:, :)
  real(dp), allocatable :: series(:)
  integer :: t

  allocate(h(nx, ny), u(nx, ny), v(nx, ny), hn(nx, ny), un(nx, ny), vn(nx, ny), series(nsteps))
  h = 0.0_dp
  u = 0.0_dp
  v = 0.0_dp
  hn = 0.0_dp
  un = 0.0_dp
  vn = 0.0_dp

  do t = 1, nsteps
    h(:, 1) = river_level(t)
    call tide(h, nx, ny, t, dt)
    call step(h, u, v, hn, un, vn, nx, ny, dt)
    series(t) = h(ig, jg)
    if (mod(t, 100) == 0) then
      print '(a, i6, a, es16.8)', 'step ', t, '  snapshot checksum ', sum(h)
    end if
  end do

  print '(a, es16.8)', 'elevation checksum ', sum(h)
  print '(a, es16.8)', 'u velocity checksum ', sum(u)
  print '(a, es16.8)', 'v velocity checksum ', sum(v)
  print '(a, es16.8)', 'gauge series checksum ', sum(series)
  deallocate(h, u, v, hn, un, vn, series)
end program estuary_serial
