// Working time between two moments and its wording (hand-worked on a Mon–Fri 08:30–17:00 week).
import { describe, it, expect } from 'vitest'
import { formatWorkingTime, typicalDayMinutes, workingMinutesBetween } from '../../shared/domain/working-time'

const day = (d: number) => ({ start: d * 1440 + 510, end: d * 1440 + 1020 }) // 08:30–17:00, 510 min
const week = [0, 1, 2, 3, 4, 7, 8].map(day)

describe('working time', () => {
  it('when a piece due Friday 17:00 is done Monday 10:00, then it is 90 working minutes late, not 65 clock hours', () => {
    expect(workingMinutesBetween(week, 4 * 1440 + 1020, 7 * 1440 + 600)).toBe(90)
  })
  it('when done before the due moment, then the working minutes are negative', () => {
    expect(workingMinutesBetween(week, 1 * 1440 + 600, 0 * 1440 + 600)).toBe(-510)
  })
  it('when the open days are 8.5 h, then a typical day is 510 min and 1,200 working minutes read "2 working days 3 h"', () => {
    expect(typicalDayMinutes(week)).toBe(510)
    // 1200 = 2 × 510 + 180 (hand-worked).
    expect(formatWorkingTime(1200, 510)).toBe('2 working days 3 h')
    expect(formatWorkingTime(95, 510)).toBe('1 h 35 min')
  })
  it('when the time is past a working day, then it is rounded to the nearest hour, not cut off', () => {
    // The demo's working day: 08:30–12:30 and 13:15–17:00, 465 min (hand-worked below).
    // 4 d 26 min = 4 × 465 + 26 = 1,886: 26 min is nearer 0 h than 1 h.
    expect(formatWorkingTime(1886, 465)).toBe('4 working days')
    // 2 d 6 h 55 min = 930 + 415 = 1,345: 415 min is 5 min short of 7 h.
    expect(formatWorkingTime(1345, 465)).toBe('2 working days 7 h')
    // 13 d 5 h 38 min = 6,045 + 338 = 6,383: 338 min is 22 min short of 6 h.
    expect(formatWorkingTime(6383, 465)).toBe('13 working days 6 h')
    // 2 d 7 h 10 min = 930 + 430: 7 h is 10 min away, the next day (465) 35 min.
    expect(formatWorkingTime(1360, 465)).toBe('2 working days 7 h')
    // Lateness is shown the same way: -1,345 (to spare) reads like 1,345.
    expect(formatWorkingTime(-1345, 465)).toBe('2 working days 7 h')
  })
  it('when the rest is nearer the next whole working day than any whole hour, then it carries into the days', () => {
    // 465-min day: 2 d 7 h 30 min = 930 + 450: 8 h would be 30 min away, the third day (465) only 15 min.
    expect(formatWorkingTime(1380, 465)).toBe('3 working days')
    // 480-min day: 2 d 7 h 45 min = 960 + 465: 15 min short of the third day (8 h = the whole day).
    expect(formatWorkingTime(1425, 480)).toBe('3 working days')
    // 480-min day: 2 d 7 h 29 min = 960 + 449: 7 h is 29 min away, the next day 31 min.
    expect(formatWorkingTime(1409, 480)).toBe('2 working days 7 h')
    // 480-min day: 7 h 50 min short of a day stays in hours and minutes.
    expect(formatWorkingTime(470, 480)).toBe('7 h 50 min')
  })
  it('when the time is not zero but under half a minute, then it never reads as 0', () => {
    expect(formatWorkingTime(0.4, 465)).toBe('under 1 min')
    expect(formatWorkingTime(-0.4, 465)).toBe('under 1 min')
    expect(formatWorkingTime(0, 465)).toBe('0 min')
    // Under a day, whole minutes, rounded: 89.6 min → 90 min.
    expect(formatWorkingTime(89.6, 465)).toBe('1 h 30 min')
  })
})
