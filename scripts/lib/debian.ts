import { spawnSync } from 'node:child_process'
import { existsSync } from 'node:fs'
import { fail, step } from './proc'

/** A Debian package and how to tell it is already there. */
export interface DebianPackage {
  name: string
  present: () => boolean
  /** What it is needed for, in the message when it cannot be installed. */
  purpose: string
}

export const hasFile = (...paths: string[]) => () => paths.some(p => existsSync(p))
export const hasCommand = (name: string) => () => spawnSync('sh', ['-c', `command -v ${name}`], { stdio: 'ignore' }).status === 0

/**
 * Installs the missing ones with apt-get (root, Debian), in one go; exits with a message that
 * names them and what they are for when that is not possible.
 */
export function ensureDebianPackages(packages: DebianPackage[]): void {
  const missing = packages.filter(p => !p.present())
  if (!missing.length) return
  const names = missing.map(p => p.name)
  const isRoot = process.getuid?.() === 0
  const hasApt = existsSync('/usr/bin/apt-get')
  if (!isRoot || !hasApt) {
    fail(`missing ${missing.map(p => `${p.name} (${p.purpose})`).join(', ')}, and they cannot be installed here `
      + `(${!hasApt ? 'no apt-get on this machine' : 'this needs root'}). Install them with\n`
      + `    sudo apt-get install ${names.join(' ')}`)
  }
  step(`installing Debian's ${names.join(', ')} (once)…`)
  const env = { ...process.env, DEBIAN_FRONTEND: 'noninteractive' }
  const update = spawnSync('apt-get', ['update'], { stdio: 'inherit', env })
  const install = update.status === 0 && spawnSync('apt-get', ['install', '-y', '--no-install-recommends', ...names], { stdio: 'inherit', env })
  const still = missing.filter(p => !p.present())
  if (!install || install.status !== 0 || still.length) fail(`apt-get could not install ${names.join(' ')}; see the output above`)
}
