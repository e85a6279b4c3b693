;;; ringside-test.el --- ERT checks of ringside.el  -*- lexical-binding: t; -*-

;; Run: emacs --batch -Q -L editors/emacs -l editors/emacs/test/ringside-test.el -f ert-run-tests-batch-and-exit
;; With RINGSIDE_BIN set (and eglot available) it also starts that server
;; through eglot on editors/test/sample.loop and runs ringside.plot; with
;; RINGSIDE_REAL=1 too (RINGSIDE_BIN is then the real server), it checks
;; the hover, the quick-fixes and `ringside-plot' on a loop that needs them.

;;; Code:

(require 'ert)
(require 'ringside)

;; eglot may come as a package (Debian's elpa-eglot on Emacs 28); -Q skips
;; both the system package folder and package activation, so do both here.
(require 'package)
(unless (locate-library "eglot")
  (let ((system-elpa "/usr/share/emacs/site-lisp/elpa"))
    (when (file-directory-p system-elpa)
      (add-to-list 'package-directory-list system-elpa)))
  (package-initialize))

(defconst ringside-test-sample
  (expand-file-name "../../test/sample.loop"
                    (file-name-directory (or load-file-name buffer-file-name)))
  "The shared fixture of the editor set-up tests.")

(defun ringside-test-face-at (text &optional offset)
  "Face at the first occurrence of TEXT (plus OFFSET) in the current buffer."
  (save-excursion
    (goto-char (point-min))
    (should (let ((case-fold-search nil)) (search-forward text nil t)))
    (get-text-property (+ (match-beginning 0) (or offset 0)) 'face)))

(defmacro ringside-test-with-sample (&rest body)
  "Run BODY in a `loop-mode' buffer holding the fixture, fontified."
  `(with-temp-buffer
     (insert-file-contents ringside-test-sample)
     (loop-mode)
     (font-lock-ensure)
     ,@body))

(ert-deftest ringside-auto-mode ()
  (should (eq (cdr (assoc "\\.loop\\'" auto-mode-alist)) 'loop-mode)))

(ert-deftest ringside-font-lock ()
  (ringside-test-with-sample
   (should (eq (ringside-test-face-at "Fixture") 'font-lock-comment-face))
   (should (eq (ringside-test-face-at "sample") 'font-lock-keyword-face))
   (should (eq (ringside-test-face-at "ms") 'font-lock-type-face))
   (should (eq (ringside-test-face-at "max") 'font-lock-keyword-face))
   (should (eq (ringside-test-face-at "gain kp" 5) 'font-lock-variable-name-face))
   (should (eq (ringside-test-face-at "block ctl" 6) 'font-lock-type-face))
   (should (eq (ringside-test-face-at "zoh") 'font-lock-builtin-face))
   ;; `7s' is 7 * s: the s is the Laplace variable, not seconds.
   (should (eq (ringside-test-face-at "7s" 1) 'font-lock-constant-face))
   (should (eq (ringside-test-face-at "loop conveyor" 5) 'font-lock-function-name-face))
   (should (eq (ringside-test-face-at "gain_margin") 'font-lock-builtin-face))
   (should (eq (ringside-test-face-at "dB") 'font-lock-type-face))))

(ert-deftest ringside-comments ()
  (ringside-test-with-sample
   (should (equal comment-start "# "))
   (goto-char (point-max))
   (insert "gain extra = 1")
   (comment-region (line-beginning-position) (line-end-position))
   (should (equal (buffer-substring (line-beginning-position) (line-end-position))
                  "# gain extra = 1"))))

(ert-deftest ringside-indent ()
  (with-temp-buffer
    (loop-mode)
    (insert "loop a {\nforward b\n}\n")
    (indent-region (point-min) (point-max))
    (should (equal (buffer-string) "loop a {\n  forward b\n}\n"))))

(ert-deftest ringside-eglot-registration ()
  (skip-unless (require 'eglot nil t))
  (should (member '(loop-mode "ringside" "serve") eglot-server-programs)))

(defconst ringside-test-readme
  (expand-file-name "../../README.md"
                    (file-name-directory (or load-file-name buffer-file-name)))
  "The editors README whose Emacs snippet must work as written.")

(defun ringside-test-readme-snippet ()
  "The first elisp block of the README's Emacs section."
  (with-temp-buffer
    (insert-file-contents ringside-test-readme)
    (goto-char (point-min))
    (should (search-forward "## Emacs" nil t))
    (should (search-forward "```elisp\n" nil t))
    (buffer-substring (point) (progn (search-forward "```") (match-beginning 0)))))

(ert-deftest ringside-readme-snippet-from-clean-emacs ()
  "The README snippet, from `emacs -q' (no packages activated), opens a
.loop file in `loop-mode' with eglot loaded and no error."
  (let* ((dir (make-temp-file "ringside-q" t))
         (init (expand-file-name "init.el" dir))
         (emacs (expand-file-name invocation-name invocation-directory))
         (snippet (replace-regexp-in-string
                   "/path/to/ringside/editors/emacs"
                   (directory-file-name (file-name-directory (locate-library "ringside")))
                   (ringside-test-readme-snippet) t t)))
    (unwind-protect
        (progn
          (with-temp-file init (insert snippet))
          (let* ((process-environment (cons (concat "HOME=" dir) process-environment))
                 (out (with-temp-buffer
                        (list (call-process emacs nil t nil "-q" "--batch" "-l" init
                                            "--eval" (format "(progn (find-file %S) (princ (format \"RESULT %%s %%s\" major-mode (featurep 'eglot))))"
                                                             ringside-test-sample))
                              (buffer-string)))))
            (should (equal (car out) 0))
            (should-not (string-match-p "error" (cadr out)))
            (should (string-match-p "RESULT loop-mode t" (cadr out)))))
      (delete-directory dir t))))

(ert-deftest ringside-keys ()
  (with-temp-buffer
    (loop-mode)
    (should (eq (key-binding (kbd "C-c C-h")) 'ringside-hover))
    (should (eq (key-binding (kbd "C-c C-a")) 'ringside-code-actions))
    (should (eq (key-binding (kbd "C-c C-r")) 'ringside-rename))
    (should (eq (key-binding (kbd "C-c C-p")) 'ringside-plot))
    (should (eq (key-binding (kbd "M-n")) 'flymake-goto-next-error))))

(defmacro ringside-test-with-server (text &rest body)
  "Run BODY in a buffer visiting a temporary .loop file holding TEXT, with
$RINGSIDE_BIN started through eglot; `server' is bound to it.
`eglot-ensure' waits for the command loop, which batch mode lacks; the
server is started the way M-x eglot would."
  (declare (indent 1))
  `(let* ((dir (make-temp-file "ringside-ws" t))
          (file (expand-file-name "loop.loop" dir))
          (eglot-server-programs `((loop-mode ,(getenv "RINGSIDE_BIN") "serve")))
          buf)
     (with-temp-file file (insert ,text))
     (setq buf (find-file-noselect file))
     (unwind-protect
         (with-current-buffer buf
           (apply #'eglot (eglot--guess-contact))
           (let ((deadline (+ (float-time) 10)) server)
             (while (and (not (setq server (eglot-current-server)))
                         (< (float-time) deadline))
               (accept-process-output nil 0.1))
             (should server)
             (unwind-protect (progn ,@body)
               (eglot-shutdown server))))
       (kill-buffer buf)
       (delete-directory dir t))))

(ert-deftest ringside-eglot-plot ()
  "Starts $RINGSIDE_BIN through eglot on the fixture and runs ringside.plot."
  (skip-unless (and (getenv "RINGSIDE_BIN") (require 'eglot nil t)))
  (ringside-test-with-server (with-temp-buffer
                               (insert-file-contents ringside-test-sample)
                               (buffer-string))
    (should (eq major-mode 'loop-mode))
    (let ((result (jsonrpc-request
                   server :workspace/executeCommand
                   `(:command "ringside.plot"
                     :arguments [(:uri ,(ringside--uri buffer-file-name)
                                  :write :json-false)]))))
      (should (string-match-p "<svg" (plist-get result :html))))))

(defconst ringside-test-pan
  "sample 2 ms\ngain krate = 1.5\nblock pan_stage = 1 / (z - 0.5)\nloop pan_rate {\n  forward krate pan_stage\n}\n"
  "A loop on the unit circle whose gain fix answers two diagnostics.")

(ert-deftest ringside-real-server ()
  "Hover reads as plain text, each quick-fix is offered once, and
`ringside-plot' writes the page and opens it."
  (skip-unless (and (getenv "RINGSIDE_BIN") (equal (getenv "RINGSIDE_REAL") "1") (require 'eglot nil t)))
  (ringside-test-with-server ringside-test-pan
    (let* ((uri (ringside--uri buffer-file-name))
           (name '(:start (:line 3 :character 5) :end (:line 3 :character 13)))
           (hover (jsonrpc-request server :textDocument/hover
                                   `(:textDocument (:uri ,uri) :position (:line 3 :character 6))))
           (text (plist-get (plist-get hover :contents) :value)))
      (should (string-match-p "closed-loop pole +radius" text))
      (should-not (string-match-p "|---" text))
      (let* ((diags `[(:range ,name :severity 2 :code "pole-on-circle" :message "m")
                      (:range ,name :severity 2 :code "gain-margin-low" :message "m")])
             (actions (append (jsonrpc-request server :textDocument/codeAction
                                               `(:textDocument (:uri ,uri) :range ,name
                                                 :context (:diagnostics ,diags)))
                              nil))
             (titles (mapcar (lambda (a) (plist-get a :title)) actions)))
        (should (seq-find (lambda (title) (string-prefix-p "Set krate to 0.751" title)) titles))
        (should (equal titles (delete-dups (copy-sequence titles)))))
      (let* ((opened nil)
             (ringside-open-function (lambda (f) (setq opened f)))
             (file (ringside-plot)))
        (should (equal opened file))
        (should (with-temp-buffer (insert-file-contents file) (search-forward "<svg" nil t)))
        (delete-file file)))))

;;; ringside-test.el ends here
