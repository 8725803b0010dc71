package main

import (
	"context"
	"flag"
	"fmt"
	"io"
	"os"
	"os/signal"
	"path/filepath"
	"syscall"

	"github.com/massline/massline/kernel"
	"github.com/massline/massline/kernel/workspace"
)

func cmdKernel(args []string, stdout, stderr io.Writer) int {
	if len(args) > 0 {
		switch args[0] {
		case "install", "remove":
			return cmdKernelInstall(args[0], args[1:], stdout, stderr)
		case "list":
			if len(args) > 1 {
				fmt.Fprintln(stderr, "usage: massline kernel list")
				return 2
			}
			specs, err := kernel.ListKernelSpecs()
			if err != nil {
				fmt.Fprintf(stderr, "massline: %v\n", err)
				return 1
			}
			for _, s := range specs {
				fmt.Fprintf(stdout, "%-20s %s\n", s.Name, s.Dir)
			}
			return 0
		}
	}
	fs := flag.NewFlagSet("kernel", flag.ContinueOnError)
	fs.SetOutput(stderr)
	conn := fs.String("f", "", "Jupyter connection file")
	if err := fs.Parse(args); err != nil {
		return 2
	}
	if *conn == "" {
		fmt.Fprintln(stderr, "usage: massline kernel -f CONNECTION_FILE   (Jupyter starts this; see `massline kernel install`)")
		return 2
	}
	ci, err := kernel.LoadConnection(*conn)
	if err != nil {
		fmt.Fprintf(stderr, "massline: %v\n", err)
		return 1
	}
	ws := workspace.New()
	k, err := kernel.New(ci, ws, nil)
	if err != nil {
		fmt.Fprintf(stderr, "massline: %v\n", err)
		return 1
	}
	ctx, stop := signal.NotifyContext(context.Background(), syscall.SIGTERM)
	defer stop()
	sigint := make(chan os.Signal, 1)
	signal.Notify(sigint, os.Interrupt)
	go func() {
		for range sigint {
			k.Interrupt()
		}
	}()
	if err := k.Run(ctx); err != nil {
		fmt.Fprintf(stderr, "massline: kernel: %v\n", err)
		return 1
	}
	return 0
}

func cmdKernelInstall(verb string, args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("kernel "+verb, flag.ContinueOnError)
	fs.SetOutput(stderr)
	var opts kernel.InstallOptions
	fs.BoolVar(&opts.User, "user", false, "install for the current user")
	fs.StringVar(&opts.Prefix, "prefix", "", "install under DIR/share/jupyter/kernels")
	fs.BoolVar(&opts.SysPrefix, "sys-prefix", false, "install under the Jupyter installation's prefix")
	fs.StringVar(&opts.Name, "name", "massline", "kernelspec name")
	if err := fs.Parse(args); err != nil {
		return 2
	}
	if verb == "remove" {
		path, err := kernel.RemoveKernelSpec(opts)
		if err != nil {
			fmt.Fprintf(stderr, "massline: %v\n", err)
			return 1
		}
		fmt.Fprintf(stdout, "removed %s\n", path)
		return 0
	}
	exe, err := os.Executable()
	if err == nil {
		exe, _ = filepath.EvalSymlinks(exe)
	}
	if err != nil || exe == "" {
		fmt.Fprintf(stderr, "massline: cannot find this program's path: %v\n", err)
		return 1
	}
	opts.Argv0 = exe
	path, err := kernel.InstallKernelSpec(opts)
	if err != nil {
		fmt.Fprintf(stderr, "massline: %v\n", err)
		return 1
	}
	fmt.Fprintf(stdout, "installed kernelspec %q in %s\n", opts.Name, path)
	return 0
}
