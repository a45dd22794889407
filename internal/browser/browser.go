// Package browser drives a headless Chromium through the DevTools protocol
// over a pipe (--remote-debugging-pipe: commands on the child's file
// descriptor 3, replies on 4, one JSON message per NUL-terminated chunk), for
// the tests that look at the reports as a reader's browser shows and prints
// them. No network port is opened and nothing is fetched.
package browser

import (
	"bufio"
	"encoding/base64"
	"encoding/json"
	"errors"
	"fmt"
	"os"
	"os/exec"
	"sync"
	"time"
)

// Find returns the path of a Chromium on this machine, or "".
func Find() string {
	for _, name := range []string{"chromium", "chromium-browser", "google-chrome", "chrome"} {
		if p, err := exec.LookPath(name); err == nil {
			return p
		}
	}
	return ""
}

// Browser is a running headless Chromium with one page.
type Browser struct {
	cmd     *exec.Cmd
	in      *os.File
	out     *bufio.Reader
	mu      sync.Mutex
	id      int
	session string
	events  []map[string]any
}

// Start starts Chromium (path) headless with a new empty profile in
// profileDir and opens a page.
func Start(path, profileDir string) (*Browser, error) {
	cmdR, cmdW, err := os.Pipe()
	if err != nil {
		return nil, err
	}
	repR, repW, err := os.Pipe()
	if err != nil {
		return nil, err
	}
	cmd := exec.Command(path, "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
		"--disable-background-networking", "--disable-component-update", "--disable-sync", "--hide-scrollbars",
		"--remote-debugging-pipe", "--user-data-dir="+profileDir, "about:blank")
	cmd.ExtraFiles = []*os.File{cmdR, repW}
	if err := cmd.Start(); err != nil {
		return nil, err
	}
	cmdR.Close()
	repW.Close()
	b := &Browser{cmd: cmd, in: cmdW, out: bufio.NewReader(repR)}
	var t struct {
		TargetID string `json:"targetId"`
	}
	if err := b.call("", "Target.createTarget", map[string]any{"url": "about:blank"}, &t); err != nil {
		b.Close()
		return nil, err
	}
	var s struct {
		SessionID string `json:"sessionId"`
	}
	if err := b.call("", "Target.attachToTarget", map[string]any{"targetId": t.TargetID, "flatten": true}, &s); err != nil {
		b.Close()
		return nil, err
	}
	b.session = s.SessionID
	if err := b.Call("Page.enable", nil, nil); err != nil {
		b.Close()
		return nil, err
	}
	return b, nil
}

// Close ends the browser.
func (b *Browser) Close() {
	b.in.Close()
	done := make(chan struct{})
	go func() { b.cmd.Wait(); close(done) }()
	select {
	case <-done:
	case <-time.After(5 * time.Second):
		b.cmd.Process.Kill()
		<-done
	}
}

// Call sends a command to the page and decodes its result into out.
func (b *Browser) Call(method string, params any, out any) error {
	return b.call(b.session, method, params, out)
}

func (b *Browser) call(session, method string, params any, out any) error {
	b.mu.Lock()
	defer b.mu.Unlock()
	b.id++
	msg := map[string]any{"id": b.id, "method": method}
	if params != nil {
		msg["params"] = params
	}
	if session != "" {
		msg["sessionId"] = session
	}
	data, err := json.Marshal(msg)
	if err != nil {
		return err
	}
	if _, err := b.in.Write(append(data, 0)); err != nil {
		return fmt.Errorf("browser: %s: %w", method, err)
	}
	for {
		raw, err := b.out.ReadBytes(0)
		if err != nil {
			return fmt.Errorf("browser: %s: %w", method, err)
		}
		var rep struct {
			ID     int             `json:"id"`
			Result json.RawMessage `json:"result"`
			Error  *struct {
				Message string `json:"message"`
			} `json:"error"`
			Method string         `json:"method"`
			Params map[string]any `json:"params"`
		}
		if err := json.Unmarshal(raw[:len(raw)-1], &rep); err != nil {
			return fmt.Errorf("browser: %s: %w", method, err)
		}
		if rep.Method != "" {
			b.events = append(b.events, map[string]any{"method": rep.Method})
			continue
		}
		if rep.ID != b.id {
			continue
		}
		if rep.Error != nil {
			return fmt.Errorf("browser: %s: %s", method, rep.Error.Message)
		}
		if out != nil {
			return json.Unmarshal(rep.Result, out)
		}
		return nil
	}
}

// Open sets the viewport width (CSS px) and loads url, waiting until the
// page has loaded.
func (b *Browser) Open(url string, width, height int) error {
	if err := b.Call("Emulation.setDeviceMetricsOverride", map[string]any{"width": width, "height": height, "deviceScaleFactor": 1, "mobile": width < 600}, nil); err != nil {
		return err
	}
	if err := b.Call("Emulation.setEmulatedMedia", map[string]any{"media": ""}, nil); err != nil {
		return err
	}
	b.mu.Lock()
	b.events = nil
	b.mu.Unlock()
	if err := b.Call("Page.navigate", map[string]any{"url": url}, nil); err != nil {
		return err
	}
	deadline := time.Now().Add(30 * time.Second)
	for time.Now().Before(deadline) {
		var ready string
		if err := b.Eval(`document.readyState`, &ready); err != nil {
			return err
		}
		if ready == "complete" {
			return nil
		}
		time.Sleep(50 * time.Millisecond)
	}
	return errors.New("browser: the page did not load in 30 s")
}

// Media emulates a CSS media type ("print", or "" for the screen).
func (b *Browser) Media(media string) error {
	return b.Call("Emulation.setEmulatedMedia", map[string]any{"media": media}, nil)
}

// Eval evaluates a JavaScript expression in the page and decodes its value.
func (b *Browser) Eval(expr string, out any) error {
	var r struct {
		Result struct {
			Value json.RawMessage `json:"value"`
		} `json:"result"`
		Exception *struct {
			Text string `json:"text"`
		} `json:"exceptionDetails"`
	}
	if err := b.Call("Runtime.evaluate", map[string]any{"expression": expr, "returnByValue": true}, &r); err != nil {
		return err
	}
	if r.Exception != nil {
		return fmt.Errorf("browser: script: %s", r.Exception.Text)
	}
	if out == nil {
		return nil
	}
	return json.Unmarshal(r.Result.Value, out)
}

// Screenshot returns a PNG of the whole page.
func (b *Browser) Screenshot() ([]byte, error) {
	var r struct {
		Data string `json:"data"`
	}
	if err := b.Call("Page.captureScreenshot", map[string]any{"format": "png", "captureBeyondViewport": true}, &r); err != nil {
		return nil, err
	}
	return base64.StdEncoding.DecodeString(r.Data)
}

// PDF prints the page as the browser's print dialog would, with the page
// size and margins of the page's stylesheet, and returns the PDF.
func (b *Browser) PDF() ([]byte, error) {
	var r struct {
		Data string `json:"data"`
	}
	if err := b.Call("Page.printToPDF", map[string]any{"preferCSSPageSize": true, "printBackground": true, "displayHeaderFooter": false}, &r); err != nil {
		return nil, err
	}
	return base64.StdEncoding.DecodeString(r.Data)
}
