#!/usr/bin/python3
"""Installs an .oxt into a LibreOffice user profile through the office's own ExtensionManager.

Used by `./lode install` where unopkg cannot be used: unopkg refuses per-user installs when run as
root. This starts a headless soffice on the profile (initialising it first if it is new), adds the
extension for the "user" repository with every question approved, and stops that soffice by its
process id. Run with Debian's /usr/bin/python3 (python3-uno).

  install_extension.py path/to/lode.oxt [--profile DIR]
"""

import argparse
import os
import signal
import subprocess
import sys
import time
import uuid

import uno
import unohelper
from com.sun.star.connection import NoConnectException
from com.sun.star.task import XInteractionApprove, XInteractionHandler
from com.sun.star.ucb import XCommandEnvironment


class _Approve(unohelper.Base, XInteractionHandler):
    def handle(self, request):
        for c in request.getContinuations():
            if c.queryInterface(uno.getTypeByName("com.sun.star.task.XInteractionApprove")):
                c.select()
                return


class _Environment(unohelper.Base, XCommandEnvironment):
    def getInteractionHandler(self):
        return _Approve()

    def getProgressHandler(self):
        return None


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("oxt")
    ap.add_argument("--profile", help="profile folder (default: the user's own LibreOffice profile)")
    ap.add_argument("--timeout", type=float, default=120)
    args = ap.parse_args()
    oxt = os.path.abspath(args.oxt)
    env_args = []
    if args.profile:
        env_args = ["-env:UserInstallation=" + uno.systemPathToFileUrl(os.path.abspath(args.profile))]
    # a fresh profile drops extension registrations made on its first start: initialise it first
    subprocess.run(["soffice", "--headless", "--norestore", "--terminate_after_init"] + env_args,
                   timeout=args.timeout, check=True, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    pipe = "lode_install_" + uuid.uuid4().hex[:12]
    proc = subprocess.Popen(["soffice", "--headless", "--invisible", "--norestore", "--nologo", "--nodefault",
                             "--nolockcheck", f"--accept=pipe,name={pipe};urp;StarOffice.ComponentContext"] + env_args,
                            stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, start_new_session=True)
    try:
        local = uno.getComponentContext()
        resolver = local.ServiceManager.createInstanceWithContext("com.sun.star.bridge.UnoUrlResolver", local)
        deadline = time.monotonic() + args.timeout
        while True:
            if proc.poll() is not None:
                sys.exit(f"soffice exited ({proc.returncode}); is LibreOffice already running with this profile? "
                         "Close it and try again.")
            try:
                ctx = resolver.resolve(f"uno:pipe,name={pipe};urp;StarOffice.ComponentContext")
                break
            except NoConnectException:
                if time.monotonic() > deadline:
                    sys.exit("soffice did not start in time")
                time.sleep(0.3)
        manager = ctx.getValueByName("/singletons/com.sun.star.deployment.ExtensionManager")
        abort = manager.createAbortChannel()
        package = manager.addExtension(uno.systemPathToFileUrl(oxt), (), "user", abort, _Environment())
        ident = package.getIdentifier().Value if package else "?"
        print(f"installed {ident} {package.getVersion() if package else ''} into the user profile")
        desktop = ctx.ServiceManager.createInstanceWithContext("com.sun.star.frame.Desktop", ctx)
        try:
            desktop.terminate()
        except Exception:
            pass
        proc.wait(timeout=30)
    finally:
        if proc.poll() is None:
            os.killpg(proc.pid, signal.SIGTERM)
            try:
                proc.wait(timeout=10)
            except subprocess.TimeoutExpired:
                os.killpg(proc.pid, signal.SIGKILL)


if __name__ == "__main__":
    main()
